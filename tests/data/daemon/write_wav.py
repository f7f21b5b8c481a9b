"""Writes a mono 16-bit PCM WAV with Python's own wave module, for the drop-directory and replay
tests: an outside writer, so the daemon's WAV reader is not checked against itself.

usage: write_wav.py RAW_INT16_LE OUT.wav RATE_HZ [--cut BYTES]

RAW_INT16_LE holds the samples as little-endian int16. --cut removes BYTES from the end of the
finished file, leaving the header's sizes as written: a recording truncated in transfer.
"""
import sys
import wave


def main(argv):
    if len(argv) not in (4, 6):
        sys.exit(__doc__)
    raw, out, rate = argv[1], argv[2], int(argv[3])
    with open(raw, "rb") as f:
        frames = f.read()
    with wave.open(out, "wb") as w:
        w.setnchannels(1)
        w.setsampwidth(2)
        w.setframerate(rate)
        w.writeframes(frames)
    if len(argv) == 6 and argv[4] == "--cut":
        cut = int(argv[5])
        with open(out, "r+b") as f:
            f.seek(0, 2)
            f.truncate(f.tell() - cut)


if __name__ == "__main__":
    main(sys.argv)
