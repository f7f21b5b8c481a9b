#!/usr/bin/python3
"""Writes the damaged and edge-case recordings beside this script (run once; the files are kept in
git). Each is small and broken in one named way; recording_reader_test.cc expects the error for it."""
import os
import struct

HERE = os.path.dirname(os.path.abspath(__file__))


def riff(chunks):
    body = b'WAVE' + b''.join(chunks)
    return b'RIFF' + struct.pack('<I', len(body)) + body


def chunk(cid, payload, declared=None):
    size = len(payload) if declared is None else declared
    pad = b'\0' if len(payload) % 2 else b''
    return cid + struct.pack('<I', size) + payload + pad


def fmt(tag=1, channels=1, rate=8000, bits=16, align=None):
    align = channels * bits // 8 if align is None else align
    return chunk(b'fmt ', struct.pack('<HHIIHH', tag, channels, rate, rate * align, align, bits))


def pcm16(values):
    return struct.pack('<%dh' % len(values), *values)


def write(name, data):
    with open(os.path.join(HERE, name), 'wb') as f:
        f.write(data)


samples = pcm16([0, 1000, -1000, 32767, -32768, 5, 6, 7, 8, 9])
# The data chunk says 1000 bytes; 20 follow (a recording cut off mid-copy).
write('truncated_data.wav', riff([fmt(), chunk(b'data', samples, declared=1000)]))
# 'WAVX' where 'WAVE' belongs.
write('bad_header.wav', b'RIFF' + struct.pack('<I', 36) + b'WAVX' + fmt() + chunk(b'data', b''))
# Format tag 2: Microsoft ADPCM, a compressed encoding the reader does not decode.
write('adpcm.wav', riff([fmt(tag=2, bits=4, align=256), chunk(b'data', b'\0' * 256)]))
# 12-bit PCM in the plain format (no container width to go by).
write('pcm12.wav', riff([fmt(bits=12, align=2), chunk(b'data', samples)]))
# A LIST chunk that claims nearly 4 GiB in a file of a few dozen bytes.
write('huge_chunk.wav', riff([fmt(), chunk(b'LIST', b'abcd', declared=0xFFFFFFF0),
                              chunk(b'data', samples)]))
# A fmt chunk and no data chunk.
write('no_data.wav', riff([fmt()]))
# Three columns with a header: a time column (1 kHz) and two accelerometer axes.
with open(os.path.join(HERE, 'named_column.csv'), 'w') as f:
    f.write('# P-102 drive end, two axes\n')
    f.write('time_s,accel_x,accel_y\n')
    for i in range(8):
        f.write('%.3f,%g,%g\n' % (i / 1000.0, 0.5 * i, -0.25 * i))
# A non-numeric cell on line 5 of the file.
with open(os.path.join(HERE, 'non_numeric.csv'), 'w') as f:
    f.write('accel\n0.1\n0.2\n-0.3\nn/a\n0.4\n')
# A time column with a sample missing after t = 0.002 s.
with open(os.path.join(HERE, 'uneven_time.csv'), 'w') as f:
    f.write('time_s,accel\n0.000,1\n0.001,2\n0.002,3\n0.004,4\n0.005,5\n0.006,6\n')
# Seven bytes: three and a half int16 samples.
write('odd_length.s16', pcm16([1, 2, 3]) + b'\x04')
