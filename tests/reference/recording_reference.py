#!/usr/bin/python3
"""Outside reference for Spinward's recording readers and `spinward analyze`.

Writes recordings with Python's own `wave` module, `scipy.io.wavfile` and numpy, reads them back with
SciPy, and computes `scipy.signal.welch` on them, printing numbers with 17 significant digits so the
C++ tests can compare bit-for-bit or to a stated tolerance. Run with Debian's /usr/bin/python3.

  write-wav PATH ENCODING CHANNELS RATE FRAMES SEED
      ENCODING: pcm8, pcm16, pcm24, pcm32 (the wave module), float32, float64 (scipy.io.wavfile),
      ext16, ext24in32, extfloat32 (WAVE_FORMAT_EXTENSIBLE, laid out here by struct per the RIFF
      spec, with an odd-sized LIST chunk before the data to exercise pad bytes).
      Prints "RATE CHANNELS FRAMES", then one line per frame: the samples as scipy.io.wavfile.read
      returns them, integers divided by their dtype's full scale (uint8: (x - 128) / 128).
  write-raw PATH ENCODING CHANNELS FRAMES SEED
      ENCODING f32 or s16: headerless little-endian numpy arrays (tofile), frames interleaved.
      Prints "CHANNELS FRAMES", then the frames (int16 divided by 32768).
  write-signal PATH RATE SECONDS SEED
      A test vibration signal (two sines, white noise): .wav as float32 via scipy.io.wavfile,
      .csv with a header "time_s,accel" (numpy), values with 17 significant digits.
  write-sine PATH RATE SECONDS FREQUENCY AMPLITUDE
      A pure sine, written as write-signal writes (float32 WAV, or CSV with a time column).
  welch PATH key=value ...
      scipy.signal.welch of a file written above; keys: rate, nperseg, noverlap, nfft, window
      (name or kaiser:BETA), detrend (none|constant|linear), scaling, sides (one|two),
      average (mean|median), column (CSV). Prints "FREQUENCY PSD" per bin.
"""
import struct
import sys

import numpy as np
import scipy.io.wavfile
import scipy.signal
import wave


def integer_frames(rng, frames, channels, bits):
    lo, hi = -(1 << (bits - 1)), (1 << (bits - 1))
    data = rng.integers(lo, hi, size=(frames, channels), dtype=np.int64)
    data[0, 0], data[-1, -1] = lo, hi - 1  # the extremes of the full scale
    return data


def pack_int(data, bits):
    # Little-endian two's complement of `bits` bits per sample, interleaved by frame.
    flat = data.reshape(-1).astype('<i8')
    raw = flat.view(np.uint8).reshape(-1, 8)[:, : bits // 8]
    return raw.tobytes()


def write_with_wave_module(path, data, bits, rate):
    with wave.open(path, 'wb') as w:
        w.setnchannels(data.shape[1])
        w.setsampwidth(bits // 8)
        w.setframerate(rate)
        if bits == 8:
            w.writeframes((data + 128).astype(np.uint8).tobytes())
        else:
            w.writeframes(pack_int(data, bits))


def write_extensible(path, payload, channels, rate, container_bits, valid_bits, subformat):
    block_align = channels * container_bits // 8
    guid = struct.pack('<H', subformat) + bytes.fromhex('000000001000800000aa00389b71')
    fmt = struct.pack('<HHIIHHHHI', 0xFFFE, channels, rate, rate * block_align, block_align,
                      container_bits, 22, valid_bits, (1 << channels) - 1) + guid
    info = b'INFOx'  # 5 bytes: odd, so a pad byte follows
    chunks = (b'fmt ' + struct.pack('<I', len(fmt)) + fmt +
              b'LIST' + struct.pack('<I', len(info)) + info + b'\0' +
              b'data' + struct.pack('<I', len(payload)) + payload)
    with open(path, 'wb') as f:
        f.write(b'RIFF' + struct.pack('<I', 4 + len(chunks)) + b'WAVE' + chunks)


def write_wav(path, encoding, channels, rate, frames, seed):
    rng = np.random.default_rng(seed)
    if encoding in ('pcm8', 'pcm16', 'pcm24', 'pcm32'):
        bits = int(encoding[3:])
        write_with_wave_module(path, integer_frames(rng, frames, channels, bits), bits, rate)
    elif encoding in ('float32', 'float64'):
        data = rng.normal(0.0, 0.5, size=(frames, channels)).astype(encoding)
        scipy.io.wavfile.write(path, rate, data[:, 0] if channels == 1 else data)
    elif encoding == 'ext16':
        payload = pack_int(integer_frames(rng, frames, channels, 16), 16)
        write_extensible(path, payload, channels, rate, 16, 16, 1)
    elif encoding == 'ext24in32':
        # 24 valid bits left-justified in 32-bit containers: the low byte is zero.
        data = integer_frames(rng, frames, channels, 24) * 256
        write_extensible(path, pack_int(data, 32), channels, rate, 32, 24, 1)
    elif encoding == 'extfloat32':
        data = rng.normal(0.0, 0.5, size=(frames, channels)).astype('<f4')
        write_extensible(path, data.tobytes(), channels, rate, 32, 32, 3)
    else:
        raise SystemExit('unknown encoding ' + encoding)

    read_rate, samples = scipy.io.wavfile.read(path)
    if samples.ndim == 1:
        samples = samples[:, None]
    if samples.dtype == np.uint8:
        values = (samples.astype(np.float64) - 128.0) / 128.0
    elif samples.dtype.kind == 'i':
        values = samples.astype(np.float64) / float(1 << (8 * samples.dtype.itemsize - 1))
    else:
        values = samples.astype(np.float64)
    print(read_rate, values.shape[1], values.shape[0])
    for row in values:
        print(' '.join('%.17g' % v for v in row))


def write_raw(path, encoding, channels, frames, seed):
    rng = np.random.default_rng(seed)
    if encoding == 's16':
        data = integer_frames(rng, frames, channels, 16)
        data.astype('<i2').tofile(path)
        values = data / 32768.0
    else:
        data = rng.normal(0.0, 2.0, size=(frames, channels)).astype('<f4')
        data.tofile(path)
        values = data.astype(np.float64)
    print(channels, frames)
    for row in values:
        print(' '.join('%.17g' % v for v in row))


def test_signal(rate, seconds, seed):
    rng = np.random.default_rng(seed)
    t = np.arange(int(round(rate * seconds))) / rate
    return (2.0 * np.sin(2 * np.pi * 50.0 * t) + 0.5 * np.sin(2 * np.pi * 317.3 * t + 0.4) +
            0.05 * rng.normal(size=t.size) + 0.01)


def write_signal(path, rate, seconds, seed, x=None):
    if x is None:
        x = test_signal(rate, seconds, seed)
    if path.endswith('.wav'):
        scipy.io.wavfile.write(path, rate, x.astype(np.float32))
    else:
        t = np.arange(x.size) / rate
        np.savetxt(path, np.column_stack([t, x]), fmt='%.17g', delimiter=',',
                   header='time_s,accel', comments='')


def load(path, column):
    if path.endswith('.wav'):
        rate, x = scipy.io.wavfile.read(path)
        if x.dtype.kind == 'i':
            x = x.astype(np.float64) / float(1 << (8 * x.dtype.itemsize - 1))
        return float(rate), x.astype(np.float64)
    table = np.genfromtxt(path, delimiter=',', names=True)
    t = table['time_s']
    return (t.size - 1) / (t[-1] - t[0]), table[column]


def welch(path, args):
    opts = dict(a.split('=', 1) for a in args)
    rate, x = load(path, opts.get('column', 'accel'))
    rate = float(opts.get('rate', rate))
    window = opts.get('window', 'hann')
    if window.startswith('kaiser:'):
        window = ('kaiser', float(window.split(':')[1]))
    detrend = opts.get('detrend', 'constant')
    f, p = scipy.signal.welch(
        x, fs=rate, window=window, nperseg=int(opts['nperseg']), noverlap=int(opts['noverlap']),
        nfft=int(opts.get('nfft', opts['nperseg'])),
        detrend=False if detrend == 'none' else detrend, scaling=opts.get('scaling', 'density'),
        return_onesided=opts.get('sides', 'one') == 'one', average=opts.get('average', 'mean'))
    for fi, pi in zip(f, p):
        print('%.17g %.17g' % (fi, pi))


def main():
    command, rest = sys.argv[1], sys.argv[2:]
    if command == 'write-wav':
        path, encoding, channels, rate, frames, seed = rest
        write_wav(path, encoding, int(channels), int(rate), int(frames), int(seed))
    elif command == 'write-raw':
        path, encoding, channels, frames, seed = rest
        write_raw(path, encoding, int(channels), int(frames), int(seed))
    elif command == 'write-signal':
        path, rate, seconds, seed = rest
        write_signal(path, int(rate), float(seconds), int(seed))
    elif command == 'write-sine':
        path, rate, seconds, frequency, amplitude = rest
        t = np.arange(int(round(float(rate) * float(seconds)))) / float(rate)
        x = float(amplitude) * np.sin(2 * np.pi * float(frequency) * t)
        write_signal(path, int(rate), float(seconds), 0, x)
    elif command == 'welch':
        welch(rest[0], rest[1:])
    else:
        raise SystemExit('unknown command ' + command)


if __name__ == '__main__':
    main()
