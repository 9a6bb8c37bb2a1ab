# Writes the synthetic takes of tests/torture.sh into the folder given:
#
#   /usr/bin/python3 tests/torture/make_inputs.py DIR
#
# Every WAV is written here byte by byte (RIFF/WAVE as Microsoft's
# "Multimedia Programming Interface and Data Specifications 1.0" (1991)
# lays it out: "RIFF" size "WAVE", a 16-byte "fmt " chunk, a "data"
# chunk), so a header can be made to lie on purpose. Format 1 is PCM,
# format 3 IEEE float (RFC 2361 lists both tags).
#
# Tones peak at -12 dBFS at most (synthetic test signals: do not play
# them loudly).
import os
import struct
import sys

import numpy as np

PEAK = 10.0 ** (-12.0 / 20.0)  # -12 dBFS
RATE_HZ = 48000


def header(rate_hz, channels, data_bytes, riff_bytes=None, fmt_tag=3, bits=32):
    """A 44-byte header; riff_bytes and data_bytes may lie."""
    block_align = channels * bits // 8
    if riff_bytes is None:
        riff_bytes = 36 + data_bytes
    return (b"RIFF" + struct.pack("<I", riff_bytes & 0xFFFFFFFF) + b"WAVE" +
            b"fmt " + struct.pack("<IHHIIHH", 16, fmt_tag, channels,
                                  rate_hz & 0xFFFFFFFF,
                                  (rate_hz * block_align) & 0xFFFFFFFF,
                                  block_align, bits) +
            b"data" + struct.pack("<I", data_bytes & 0xFFFFFFFF))


def float_wav(path, rate_hz, samples, **lies):
    """samples: frames x channels (or 1-D, mono), written as float32."""
    data = np.ascontiguousarray(samples, dtype="<f4")
    channels = 1 if data.ndim == 1 else data.shape[1]
    raw = data.tobytes()
    with open(path, "wb") as out:
        out.write(header(rate_hz, channels, lies.get("data_bytes", len(raw)),
                         lies.get("riff_bytes")))
        out.write(raw[:lies.get("keep_bytes", len(raw))])


def sine(freq_hz, length_s, rate_hz=RATE_HZ, peak=PEAK):
    t_s = np.arange(int(round(length_s * rate_hz))) / rate_hz
    return peak * np.sin(2.0 * np.pi * freq_hz * t_s)


def harmonic(freq_hz, length_s, rate_hz=RATE_HZ, partials=3):
    """Partials 1/k, normalised to PEAK, 10 ms raised-cosine ramps."""
    t_s = np.arange(int(round(length_s * rate_hz))) / rate_hz
    tone = sum(np.sin(2 * np.pi * k * freq_hz * t_s) / k
               for k in range(1, partials + 1))
    ramp_n = int(0.01 * rate_hz)
    ramp = 0.5 - 0.5 * np.cos(np.pi * np.arange(ramp_n) / ramp_n)
    tone[:ramp_n] *= ramp
    tone[-ramp_n:] *= ramp[::-1]
    return PEAK * tone / np.max(np.abs(tone))


def main(folder):
    def path(name):
        return os.path.join(folder, name)

    # The flagged take: 452 Hz is 1200*log2(452/440) = +46.6 cents (cents:
    # Ellis 1885) from A4 = 440 Hz (ISO 16:1975) and -53.4 from A#4
    # (466.16 Hz, equal temperament), so its target is A4, and beyond the
    # default +-10 cents it is flagged: A4 sharp.
    flagged = sine(452.0, 1.0)
    float_wav(path("good.wav"), RATE_HZ, flagged)
    # 338.6 Hz is +46.5 cents from E4 (440 * 2**(-5/12) = 329.628 Hz) and
    # -53.5 from F4: E4 sharp.
    float_wav(path("e4sharp.wav"), RATE_HZ, sine(338.6, 1.0))

    # Broken files.
    open(path("empty.wav"), "wb").close()
    float_wav(path("header-only.wav"), RATE_HZ, np.zeros(0))
    raw_bytes = len(flagged) * 4
    # Half the data and three bytes of the next sample: cut mid-sample.
    float_wav(path("truncated.wav"), RATE_HZ, flagged,
              keep_bytes=raw_bytes // 2 + 3)
    float_wav(path("lies-bigger.wav"), RATE_HZ, flagged,
              data_bytes=2 * raw_bytes, riff_bytes=36 + 2 * raw_bytes)
    float_wav(path("lies-smaller.wav"), RATE_HZ, flagged,
              data_bytes=raw_bytes // 2, riff_bytes=36 + raw_bytes // 2)
    # 0xFFFFFFFF: the size a writer leaves when it cannot seek back.
    float_wav(path("lies-ffffffff.wav"), RATE_HZ, flagged,
              data_bytes=0xFFFFFFFF, riff_bytes=0xFFFFFFFF)
    with open(path("random.wav"), "wb") as out:
        out.write(np.random.default_rng(20240611).bytes(65536))
    with open(path("text.wav"), "w") as out:
        out.write("This is a text file, not a recording.\n" * 20)

    # Sample rates: in range (8 .. 384 kHz) and out of it.
    for rate_hz in (8000, 11025, 12000, 16000, 22050, 384000):
        float_wav(path("rate-%d.wav" % rate_hz), rate_hz,
                  sine(452.0, 1.0, rate_hz))
    for rate_hz in (0, 1, 2, 7999, 384001, 1000000):
        length = max(4, rate_hz // 2)
        samples = sine(0.1 * rate_hz, 0.5, rate_hz) if rate_hz > 100 \
            else np.full(length, 0.1)
        float_wav(path("rate-%d.wav" % rate_hz), rate_hz, samples)

    # 64 channels, 1 s: channel k (from 0) holds MIDI note 30 + k,
    # 440 * 2**((m - 69) / 12) Hz (equal temperament, MIDI tuning standard).
    channels = [harmonic(440.0 * 2.0 ** ((30 + k - 69) / 12.0), 1.0)
                for k in range(64)]
    float_wav(path("multi64.wav"), RATE_HZ, np.stack(channels, axis=1))

    # Takes with no pitched note.
    float_wav(path("nan.wav"), RATE_HZ, np.full(RATE_HZ, np.nan))
    inf = np.full(RATE_HZ, np.inf)
    inf[1::2] = -np.inf
    float_wav(path("inf.wav"), RATE_HZ, inf)
    float_wav(path("silence.wav"), RATE_HZ, np.zeros(RATE_HZ))
    noise = np.random.default_rng(7).uniform(-PEAK, PEAK, RATE_HZ)
    float_wav(path("noise.wav"), RATE_HZ, noise)
    float_wav(path("tone-15khz.wav"), RATE_HZ, sine(15000.0, 1.0))
    click = np.zeros(RATE_HZ)
    click[480] = PEAK  # one sample, at 10 ms
    float_wav(path("click.wav"), RATE_HZ, click)
    hit = np.zeros(RATE_HZ)  # a noise burst at 5 ms, 5 ms decay constant
    t_s = np.arange(int(0.04 * RATE_HZ)) / RATE_HZ
    burst = np.random.default_rng(11).uniform(-1, 1, len(t_s)) * np.exp(-t_s / 0.005)
    hit[240:240 + len(burst)] = PEAK * burst / np.max(np.abs(burst))
    float_wav(path("hit.wav"), RATE_HZ, hit)


if __name__ == "__main__":
    main(sys.argv[1])
