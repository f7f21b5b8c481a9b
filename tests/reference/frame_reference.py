#!/usr/bin/python3
"""Outside reference for Spinward's frame protocol (docs/protocol.md, version 1).

Written from the byte table in docs/protocol.md with Python's struct and zlib modules, sharing no
code with the C++ codec, so a C++ test that agrees with it checks the byte layout from outside.

  frame_reference.py decode FILE          prints the frame as key=value lines, or error=REASON
  frame_reference.py encode OUT KEY=VALUE  writes one frame (see encode_frame for the keys)
  frame_reference.py crc32 FILE           prints zlib.crc32 of the file's bytes
  frame_reference.py fixtures DIR         writes tests/data/frames/* (good and corrupt frames)
"""
import math
import struct
import sys
import zlib

MAGIC = b"SPWF"
# magic, version, flags, frame_length, sample_count, sequence, first_sample_utc_ns,
# sample_rate_hz, scale, sample_format, sensor_id_length: 50 bytes, little-endian, no padding.
HEADER = struct.Struct("<4sHHIIQqddBB")
assert HEADER.size == 50
FORMATS = {1: ("int16", "h", 2), 2: ("int32", "i", 4), 3: ("float32", "f", 4)}
FORMAT_CODES = {name: code for code, (name, _, _) in FORMATS.items()}
MIN_FRAME = 50 + 1 + 2 + 4


def encode_frame(sensor_id=b"LK-P101-DE-H", rate=25600.0, time_ns=0, sequence=0, fmt="int16",
                 scale=1.0, engineering=False, samples=(0,), magic=MAGIC, version=1, flags=None,
                 frame_length=None, sample_count=None, format_code=None, id_length=None,
                 crc=None, extra=b"", cut=0):
    """Builds a frame; the keyword overrides after `samples` write wrong fields on purpose."""
    if isinstance(sensor_id, str):
        sensor_id = sensor_id.encode("utf-8")
    code = FORMAT_CODES[fmt] if format_code is None else format_code
    letter = FORMATS[FORMAT_CODES[fmt]][1]
    payload = struct.pack("<%d%s" % (len(samples), letter), *samples)
    length = 50 + len(sensor_id) + len(payload) + 4
    header = HEADER.pack(
        magic, version, (1 if engineering else 0) if flags is None else flags,
        length if frame_length is None else frame_length,
        len(samples) if sample_count is None else sample_count, sequence, time_ns, rate, scale,
        code, len(sensor_id) if id_length is None else id_length)
    body = header + sensor_id + payload
    trailer = struct.pack("<I", zlib.crc32(body) if crc is None else crc)
    frame = body + trailer + extra
    return frame[:len(frame) - cut] if cut else frame


def decode_frame(data, max_frame_bytes=1 << 20):
    """Returns (reason, None) or (None, dict), checking in the order of the doc's receiver list."""
    if len(data) < 12:
        return "truncated", None
    if data[:4] != MAGIC:
        return "bad_magic", None
    version, flags, length = struct.unpack_from("<HHI", data, 4)
    if version != 1:
        return "unsupported_version", None
    if length < MIN_FRAME:
        return "bad_length", None
    if length > max_frame_bytes:
        return "oversized", None
    if len(data) < length:
        return "truncated", None
    if len(data) > length:
        return "bad_length", None
    (stored,) = struct.unpack_from("<I", data, length - 4)
    if zlib.crc32(data[:length - 4]) != stored:
        return "bad_crc", None
    (_, _, _, _, count, sequence, time_ns, rate, scale, code, id_len) = HEADER.unpack_from(data)
    if flags & ~1:
        return "reserved_flags", None
    if code not in FORMATS:
        return "unknown_sample_format", None
    if id_len == 0 or id_len > 64 or 50 + id_len + 4 > length:
        return "bad_sensor_id", None
    try:
        sensor_id = data[50:50 + id_len].decode("utf-8")  # strict: rejects overlongs, surrogates
    except UnicodeDecodeError:
        return "bad_sensor_id", None
    if any(ord(c) < 0x20 or ord(c) == 0x7F for c in sensor_id):
        return "bad_sensor_id", None
    if not (math.isfinite(rate) and rate > 0):
        return "bad_sample_rate", None
    if not (math.isfinite(scale) and scale > 0):
        return "bad_scale", None
    name, letter, size = FORMATS[code]
    largest = {"int16": 32768.0, "int32": 2147483648.0, "float32": 3.4028234663852886e38}[name]
    if not math.isfinite(largest * scale):
        return "bad_scale", None
    if count == 0 or count * size != length - 54 - id_len:
        return "bad_sample_count", None
    raw = struct.unpack_from("<%d%s" % (count, letter), data, 50 + id_len)
    if name == "float32" and not all(math.isfinite(v) for v in raw):
        return "bad_sample", None
    return None, {
        "sensor_id": sensor_id, "sample_rate_hz": rate, "first_sample_utc_ns": time_ns,
        "sequence": sequence, "format": name, "scale": scale,
        "scale_unit": "engineering" if flags & 1 else "volts", "sample_count": count,
        "samples": [float(v) * scale for v in raw],
    }


def to_hex_lines(data):
    return "\n".join(" ".join("%02x" % b for b in data[i:i + 16]) for i in range(0, len(data), 16))


# The worked example of docs/protocol.md: Larkfield booster station, pump P-101, drive end,
# horizontal; 2026-03-14T06:30:00Z; 16-bit ADC spanning +-10 V, so 10/32768 V per count.
EXAMPLE = dict(sensor_id="LK-P101-DE-H", rate=25600.0, time_ns=1773469800 * 10**9, sequence=41,
               fmt="int16", scale=10.0 / 32768, samples=(0, 1000, -1000, 32767, -32768, 12, -12, 256))


def fixtures():
    """(file name, expected reason or 'ok', bytes) for every saved frame."""
    ex = dict(EXAMPLE)

    def frame(**over):
        args = dict(ex)
        args.update(over)
        return encode_frame(**args)

    good = frame()
    bad_crc = bytearray(good)
    bad_crc[62] ^= 0x01  # one bit of the first sample flipped in transit; trailer left as sent
    f32 = dict(fmt="float32", scale=1.0, engineering=True, samples=(0.5, -1.25, 3.0e-3, 1.0e6))
    return [
        ("doc_example_int16.bin", "ok", good),
        ("good_int32_engineering.bin", "ok",
         frame(fmt="int32", scale=9.80665e-6, engineering=True, sensor_id="LK-F201-NDE-A",
               samples=(2147483647, -2147483648, 0, 123456, -7), sequence=2**64 - 1)),
        ("good_float32.bin", "ok", frame(sensor_id="LK-P102-DE-V", **f32)),
        ("good_utf8_sensor_id.bin", "ok", frame(sensor_id="LK-P101-Lager-\u00e4u\u00dfen")),
        ("bad_magic.bin", "bad_magic", frame(magic=b"SPWG")),
        ("unsupported_version.bin", "unsupported_version", frame(version=2)),
        ("length_below_minimum.bin", "bad_length", frame(frame_length=20)),
        ("trailing_bytes.bin", "bad_length", frame(extra=b"\x00\x00\x00")),
        ("oversized_declared.bin", "oversized", frame(frame_length=0xFFFFFFF0)),
        ("truncated.bin", "truncated", frame(cut=10)),
        ("truncated_prefix.bin", "truncated", good[:7]),
        ("bad_crc.bin", "bad_crc", bytes(bad_crc)),
        ("reserved_flags.bin", "reserved_flags", frame(flags=0x0004)),
        ("unknown_sample_format.bin", "unknown_sample_format", frame(format_code=7)),
        ("sensor_id_empty.bin", "bad_sensor_id", frame(sensor_id=b"")),
        ("sensor_id_too_long.bin", "bad_sensor_id", frame(sensor_id=b"P" * 65)),
        ("sensor_id_control_char.bin", "bad_sensor_id", frame(sensor_id=b"LK-P101\tDE-H")),
        ("sensor_id_bad_utf8.bin", "bad_sensor_id", frame(sensor_id=b"LK-P101-\xc0\xafDE")),
        ("sensor_id_length_past_end.bin", "bad_sensor_id", frame(id_length=64, samples=(1,))),
        ("rate_nan.bin", "bad_sample_rate", frame(rate=float("nan"))),
        ("rate_zero.bin", "bad_sample_rate", frame(rate=0.0)),
        ("rate_negative.bin", "bad_sample_rate", frame(rate=-25600.0)),
        ("scale_zero.bin", "bad_scale", frame(scale=0.0)),
        ("scale_infinite.bin", "bad_scale", frame(scale=float("inf"))),
        ("scale_overflows.bin", "bad_scale", frame(scale=1e305)),
        ("sample_count_mismatch.bin", "bad_sample_count", frame(sample_count=9)),
        ("sample_count_zero.bin", "bad_sample_count", frame(samples=(), sample_count=0)),
        ("float32_nan_sample.bin", "bad_sample",
         frame(sensor_id="LK-P102-DE-V", **dict(f32, samples=(0.5, float("nan"), 1.0)))),
    ]


def print_frame(info):
    for key in ("sensor_id", "sample_rate_hz", "first_sample_utc_ns", "sequence", "format",
                "scale", "scale_unit", "sample_count"):
        value = info[key]
        print("%s=%s" % (key, repr(value) if isinstance(value, float) else value))
    print("samples=" + " ".join(repr(v) for v in info["samples"]))


def main(argv):
    command = argv[1]
    if command == "decode":
        with open(argv[2], "rb") as f:
            reason, info = decode_frame(f.read())
        if reason:
            print("error=" + reason)
            return 1
        print_frame(info)
    elif command == "encode":
        kwargs = {}
        for item in argv[3:]:
            key, value = item.split("=", 1)
            if key == "samples":
                kwargs[key] = tuple(float(v) if "." in v or "e" in v else int(v)
                                    for v in value.split(",") if v)
            elif key in ("rate", "scale"):
                kwargs[key] = float(value)
            elif key in ("time_ns", "sequence"):
                kwargs[key] = int(value)
            elif key == "engineering":
                kwargs[key] = value == "1"
            else:
                kwargs[key] = value
        with open(argv[2], "wb") as f:
            f.write(encode_frame(**kwargs))
    elif command == "crc32":
        with open(argv[2], "rb") as f:
            print(zlib.crc32(f.read()))
    elif command == "fixtures":
        out = argv[2]
        manifest = []
        for name, reason, data in fixtures():
            with open("%s/%s" % (out, name), "wb") as f:
                f.write(data)
            manifest.append("%s %s" % (name, reason))
        with open(out + "/MANIFEST", "w") as f:
            f.write("# file expected-result; written by tests/reference/frame_reference.py\n")
            f.write("\n".join(manifest) + "\n")
        with open(out + "/doc_example_int16.hex", "w") as f:
            f.write(to_hex_lines(encode_frame(**EXAMPLE)) + "\n")
    else:
        print("unknown command " + command, file=sys.stderr)
        return 2
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
