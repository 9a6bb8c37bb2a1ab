#!/usr/bin/env python3
"""Writes the seed corpora of tests/fuzz/corpus/<harness>/.

Each seed is a small, meaningful input in the harness's own encoding (see
the comment at the top of each fuzz_*.c), so that the fuzzer starts from
notes that are found, logs that are read and messages the plugin takes.
Run it from the repository's root after changing an encoding; the files
are committed, and `make fuzz` fuzzes a copy of them.
"""
import math
import os
import struct
import sys

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "corpus")


def write(harness, name, data):
    folder = os.path.join(ROOT, harness)
    os.makedirs(folder, exist_ok=True)
    with open(os.path.join(folder, name), "wb") as f:
        f.write(data)


# ------------------------------------------------------------ fuzz_core
# Rates in fuzz_core.c's order.
RATES = [8000, 11025, 16000, 22050, 32000, 44100, 48000, 88200, 96000,
         176400, 192000, 384000]


def u8(x):
    return struct.pack("<B", x & 0xFF)


def u16(x):
    return struct.pack("<H", x & 0xFFFF)


def u32(x):
    return struct.pack("<I", x & 0xFFFFFFFF)


def f64(x):
    return struct.pack("<d", x)


def freq_code(hz):
    """fuzz_core.c frequency_hz(): 20 Hz * 2^(9 c / 65535)."""
    return max(0, min(65535, round(math.log2(hz / 20.0) / 9.0 * 65535)))


def block(n_code, signal):
    """A process op: kind 0, a length byte, then the signal."""
    return u8(0) + n_code + signal


def len_4096():
    return u8(224 + 7)  # (7 + 1) * 512


def len_u16(n):
    return u8(112) + u16(n)


def sine(hz, amp=128):
    return u8(3) + u16(freq_code(hz)) + u8(amp)


def harmonic(hz, partials=8, b=0, amp=128):
    return u8(4) + u16(freq_code(hz)) + u8(amp) + u8(partials - 1) + u8(b)


def vibrato(hz, rate_code=20000, depth_code=20000, amp=128):
    return u8(5) + u16(freq_code(hz)) + u8(amp) + u16(rate_code) + \
        u16(depth_code) + u8(0)


def silence():
    return u8(6)


def noise(amp=20):
    return u8(7) + u32(987654321) + u8(amp)


def specials(codes):
    return u8(8) + bytes(codes)


def plucked(hz, amp=200):
    return u8(13) + u16(freq_code(hz)) + u8(amp) + u16(20000)


def core_seed(rate_index, ops, flags=1, settings=b"\x00", finish=1,
              split=b""):
    return u8(rate_index) + u8(flags) + settings + split + u8(finish) + ops


def mark_timeline(position_code=1000):
    # kind 20; position: choice 0 (range) + u16; speed: 1 (odd byte)
    return u8(20) + u8(0) + u16(position_code) + u8(1)


def mark_transport():
    # kind 22: position, speed 1, has_beats, bar, bar_beat, bpb, bpm
    return (u8(22) + u8(0) + u16(100) + u8(1) + u8(1) +
            u8(0) + u16(10) + u8(0) + u16(0) + u8(4) + u8(0) + u16(20000))


def pop(main=63, here=63):
    return u8(27) + u8(main) + u8(here)


def live():
    return u8(31)


def reset():
    return u8(25)


def finish():
    return u8(26)


def configure(settings):
    return u8(24) + settings


def core_seeds():
    a4 = b"".join(block(len_4096(), sine(440.0)) for _ in range(8))
    rest = b"".join(block(len_4096(), silence()) for _ in range(3))
    write("core", "sine-a4-48k", core_seed(6, a4 + rest + pop() + live()))
    # Two notes a semitone apart, sharp, with a live reading between.
    two = b"".join(block(len_4096(), harmonic(261.63 * 1.01)) for _ in range(5))
    two += live()
    two += b"".join(block(len_4096(), harmonic(277.18)) for _ in range(5))
    write("core", "two-notes-44k", core_seed(5, two + pop()))
    # Vibrato, transport marks and a configure in the middle.
    tolerance_25 = u8(4) + u8(1) + u16(int((25 - 1) / 49 * 65535))
    vib = mark_transport() + b"".join(
        block(len_4096(), vibrato(330.0)) for _ in range(6))
    vib += configure(tolerance_25)
    vib += b"".join(block(len_4096(), vibrato(330.0)) for _ in range(4))
    write("core", "vibrato-transport-48k", core_seed(6, vib))
    # Plucked string at 96 kHz with odd block sizes, then reset and again.
    odd = b"".join(block(len_u16(n), plucked(110.0))
                   for n in (1, 17, 511, 4095, 3000, 4096, 2048, 1000) * 2)
    write("core", "pluck-96k-odd-blocks",
          core_seed(8, odd + pop() + reset() + odd + finish()))
    # Differential: the same note fed again in blocks of one hop.
    diff = b"".join(block(len_4096(), harmonic(196.0, 12, 10)) for _ in range(6))
    write("core", "differential-22k",
          core_seed(3, diff + mark_timeline() + diff, flags=0,
                    split=u8(2) + u32(1)))
    # Bad samples among a note; an 8 kHz take.
    bad = block(len_4096(), sine(220.0)) + block(u8(100), specials(range(18)))
    bad += b"".join(block(len_4096(), sine(220.0)) for _ in range(2))
    write("core", "bad-samples-8k", core_seed(0, bad + live() + pop()))
    # Noise and silence at 384 kHz: no definite pitch.
    write("core", "noise-384k",
          core_seed(11, block(len_4096(), noise()) * 4 + pop()))
    # Settings outside plumb.h's ranges, and a rate plumb_new refuses.
    bad_settings = u8(0x1D) + u8(0) + u8(7) + u8(9) + u8(0) + u8(5) + \
        u8(3) + u8(8)
    write("core", "refused-settings", core_seed(6, live(), settings=bad_settings))
    write("core", "bad-rate", u8(252) + u8(0) + u8(0))


# ------------------------------------------------------------ fuzz_tuning
def tuning_seeds():
    just = ("# five-limit just intonation on C, cents from equal\n"
            "0, 11.73, 3.91, 15.64, -13.69, -1.96,\n"
            "-9.78, 1.96, 13.69, -15.64, 17.6, -11.73\n")
    write("tuning", "just-commas", just.encode())
    write("tuning", "bom-crlf-exponents",
          b"\xef\xbb\xbf0 1e1 -2.5E-1 +3. .5\r\n6 7 8 9 10 11 12 # end\r\n")
    write("tuning", "beyond-limit", b"0 0 0 700 0 0 0 0 0 0 0 -600.0000001\n")
    write("tuning", "eleven", b"1 2 3 4 5 6 7 8 9 10 11\n")
    write("tuning", "double-comma", b"1,, 2 3 4 5 6 7 8 9 10 11 12")
    write("tuning", "too-big", b"#!\x81" + b"0 " * 12)
    write("tuning", "decimal", b"-12.375")
    write("tuning", "long-decimal", b"123456789.012345")
    write("tuning", "note-sharp", b"C#4")
    write("tuning", "note-flat-low", b"Db-1")
    write("tuning", "note-number", b"+108")
    write("tuning", "temperament", b"werckmeister3")
    write("tuning", "stem-utf8", "Take 1: é/ü ..x".encode())
    write("tuning", "format-midpoint", b"\x05\x10\x27\x00\x00\x02\x08")


# ------------------------------------------------------------ fuzz_log_read
HEADER = ("index,start_s,end_s,timeline_s,note,midi,target_hz,f0_hz,cents,"
          "spread_cents,drift_cents_per_s,vibrato_hz,vibrato_cents,confidence,"
          "inharmonicity_b,partials,hnr_db,odd_even_db,centroid_hz,attack_ms,"
          "decay_ms,sustain_db,release_ms,peak_dbfs,verdict,"
          "bar,beat,tristimulus_1,tristimulus_2,tristimulus_3,decay_db_per_s,"
          "partial_cents")
# Rows the core wrote for fuzz_core's seeds (PLUMB_FUZZ_VERBOSE=1).
ROWS = [
    "0,0.0358,0.4586,0.0359,C4,60,261.626,264.258,17.33,0.00,0.01,,,0.999,"
    "0.000e+00,9,55.08,-3.17,777.856,4.3,0.0,-0.35,,-7.57,sharp,,,0.3679,"
    "0.3986,0.2335,,1:+0.00 2:+0.00 3:+0.00 4:+0.00 5:-0.00 11:-6.65",
    "1,0.4644,0.9289,0.4644,C#4,61,277.183,277.192,0.06,0.01,-0.02,,,0.999,"
    "0.000e+00,9,37.82,-3.17,815.940,,0.0,-0.65,,-7.57,in-tune,,,0.3679,"
    "0.3986,0.2335,,1:+0.01 2:-0.01 10:-4.12",
    "2,1.0330,1.8532,-84.5553,E4,64,329.628,336.336,34.88,7.55,0.00,11.74,"
    "16.56,0.999,5.853e-04,1,47.72,-4.45,336.473,2.7,0.0,-0.05,,-6.02,sharp,"
    "2,1.206,0.9997,0.0002,0.0000,,1:-0.00",
    "3,1.9939,2.0680,1.9939,,,,,,,,,,,,,,,,,,,,60.00,unpitched,,,,,,,",
]


def log_read_seeds():
    write("log_read", "core-log", (HEADER + "\n" + "\n".join(ROWS) + "\n").encode())
    write("log_read", "core-log-crlf-cut",
          (HEADER + "\r\n" + "\r\n".join(ROWS)).encode())
    write("log_read", "quoted",
          b'index,note,start_s,cents,verdict\n'
          b'0,"A,4","1.5",-20.04,flat\n\n'
          b'1,"say ""hi""\nthere",61.0,+7,"unsteady"\r\n'
          b'2,\x1b[31mred,1e300,-0.04,sharp\n')
    write("log_read", "no-verdict", b"index,start_s,cents\n0,0.5,12\n")
    write("log_read", "odd-numbers",
          b"start_s,cents,verdict,note\n"
          b"nan,inf,sharp,C4\n-1,-0.04,flat,\n9e15,1e-310,unsteady,x\n"
          b"0x1p3, 12,sharp,\n59.9996,-0.05,flat,B9\n")
    write("log_read", "table", b"\x80\x06" + b"\x03\x00\x05\x07\x03"
          + b"\x04\x70a,\"b\n\x61\x0a\x01\x02")
    write("log_read", "notes", b"\x81" + bytes(range(256)) * 3)


# ------------------------------------------------------------ fuzz_plugin
def p_run(events=b"", n_events=0, length=0xFF, notify=0xFF, audio=(0, 128, 100)):
    """A run() step: kind 0, the length byte, the events, the notify
    capacity byte, then the audio (kind, frequency, amplitude)."""
    return u8(0) + u8(length) + u8(n_events) + events + u8(notify) + bytes(audio)


def p_set_folder(name=b"takes"):
    # event kind 0 (Set) at frame 0; Set how 0; property 0 (logFolder);
    # value how 0x10 (a Path); string how 0 (a safe folder): length, bytes
    return u8(0) + u8(0) + u8(0) + u8(0) + u8(0x10) + u8(0) + u8(len(name)) + name


def p_set_label(label=b"take-1"):
    return u8(0) + u8(0) + u8(0) + u8(1) + u8(0x10) + u8(6) + label[:6]


def p_set_offsets():
    values = b"".join(u8(0) + u16(20000 + 2000 * i) for i in range(12))
    return u8(0) + u8(0) + u8(0) + u8(2) + u8(0x10) + u8(0x02) + values


def p_set_source(path=b"/music/take 1.wav"):
    return (u8(0) + u8(0) + u8(0) + u8(3) + u8(0x11) + u8(len(path) % 64 // 6 * 6)
            + path[: len(path) % 64 // 6 * 6])


def p_set_channel(channel=2):
    return u8(0) + u8(0) + u8(0) + u8(4) + u8(1) + u8(channel)


def p_get(how=0x07, prop=0):
    return u8(3) + u8(0) + u8(how) + u8(prop) + u8(0) + u32(7)


def p_position():
    # kind 4; which = frame, speed, bar, beat, per bar, bpm; each: how, u16
    return u8(4) + u8(0) + u8(0x3F) + b"".join(u8(k) + u16(30000) for k in range(6))


def plugin_seeds():
    tone = p_run() * 24
    setup = p_set_folder() + p_set_label() + p_set_offsets()
    write("plugin", "logged-take",
          u8(0x80) + u8(0x07) + p_run(setup, 3) + tone + u8(11) + u8(14) + u8(3))
    # No worker (features 0x28): the plugin's own log thread, with makePath.
    write("plugin", "own-thread-take",
          u8(0x81) + u8(0x2B) + p_run(p_set_label(), 1) + tone[:120] + u8(11))
    write("plugin", "get-and-position",
          u8(0x00) + u8(0x01) + p_run(p_get() + p_position() + p_get(0x01, 1), 3)
          + tone[:60] + p_run(p_get(0x00), 1, notify=2) + u8(14) + u8(0))
    write("plugin", "source-and-channel",
          u8(0x81) + u8(0x03) + p_run(p_set_source() + p_set_channel(), 2)
          + tone[:90] + u8(14) + u8(1))
    write("plugin", "controls-and-restore",
          u8(0x02) + u8(0x15) + u8(9) + u8(0) + u8(1) + u16(3000)
          + u8(12) + u8(0x45) + u8(0) + u8(0) + u8(0) + u8(0x10) + u8(6) + b"label!"
          + p_run() * 4 + u8(11) + u8(11) + p_run(length=10) + u8(15) + u8(3))
    write("plugin", "raw-events",
          u8(0x03) + u8(0x01) + p_run(u8(6) + u8(0) + u8(24) + bytes(range(24)) + u8(1)
                                      + u8(7) + u8(5) + u32(99), 2))
    write("plugin", "bad-rate", u8(0x08) + u8(0x01))
    write("plugin", "no-map", u8(0x00) + u8(0xC0))


HARNESSES = {"core": core_seeds, "tuning": tuning_seeds,
             "log_read": log_read_seeds, "plugin": plugin_seeds}

if __name__ == "__main__":
    for name in sys.argv[1:] or HARNESSES:
        HARNESSES[name]()
