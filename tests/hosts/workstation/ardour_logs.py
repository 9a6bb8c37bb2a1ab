"""Checks of the files Ardour and the plugin leave, for ardour.sh.

  ardour_logs.py stem LABEL
      print the file stem docs/log-format.md ("File names") gives LABEL
  ardour_logs.py notes LOG VERDICT PORT... [--timeline REFERENCE_LOG]
      one row for each Dummy capture PORT (1-8) in order, as the generator
      makes it; every verdict VERDICT; with --timeline, each timeline_s
      within TIMELINE_MARGIN_S of the same row of REFERENCE_LOG
  ardour_logs.py run RUN_JSON KEY=VALUE...
      each dotted KEY of run.json equals VALUE (compared as JSON)
  ardour_logs.py wav WAV FRAMES PEAK_DBFS
      a 48 kHz stereo WAV of FRAMES frames whose peak is PEAK_DBFS

Exit status 0 when the check holds; otherwise what differs goes to stdout.
Only the Python standard library is used.
"""

import csv
import json
import math
import sys
import wave

SAMPLE_RATE_HZ = 48000
# 1 cent and 0.5 dB: margins of common practice, no source; the core's
# own precision tests are far tighter.
CENTS_MARGIN = 1.0
LEVEL_MARGIN_DB = 0.5
# The recording plays back where it was heard (Ardour aligns captured
# audio for latency); 50 ms is common practice, no source.
TIMELINE_MARGIN_S = 0.05
# Ardour's Dummy backend, libs/backends/dummy/dummy_audiobackend.cc,
# DummyAudioPort::setup_generator ("Sine Wave 1K, 1/3 Oct"): amplitude
# 0.12589 ("-18dBFS" in its comment).
GENERATOR_PEAK_DBFS = 20.0 * math.log10(0.12589)
NAMES = ["C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B"]


def generator_hz(port, ports=8):
    """The sine on Dummy capture port PORT (1-based) of PORTS: the same
    source, 1000 Hz * 2^(x/3) with x = (PORT - 1) - PORTS / 2."""
    x = (port - 1) - ports // 2
    return 1000.0 * 2.0 ** (x / 3.0)


def nearest_note(f_hz):
    """MIDI number, name and target: MIDI Tuning Standard,
    f = 440 * 2^((m - 69) / 12), A4 = 440 Hz (docs/ports.md default)."""
    midi = round(69 + 12 * math.log2(f_hz / 440.0))
    target_hz = 440.0 * 2.0 ** ((midi - 69) / 12.0)
    return midi, NAMES[midi % 12] + str(midi // 12 - 1), target_hz


def stem(label):
    """docs/log-format.md, "File names": each character outside
    A-Z a-z 0-9 . _ - becomes one _, a leading . becomes _, 100 kept."""
    kept = "".join(
        c if c.isascii() and (c.isalnum() or c in "._-") else "_" for c in label
    )
    if kept.startswith("."):
        kept = "_" + kept[1:]
    return kept[:100]


def read_rows(path):
    with open(path, newline="", encoding="utf-8") as log:
        return list(csv.DictReader(log))


def check_row(row, port, verdict):
    f_hz = generator_hz(port)
    midi, name, target_hz = nearest_note(f_hz)
    cents = 1200.0 * math.log2(f_hz / target_hz)  # Ellis 1885
    where = "row %s (capture_%d, %.3f Hz)" % (row["index"], port, f_hz)
    problems = []
    if row["midi"] != str(midi) or row["note"] != name:
        problems.append("%s (%s), expected %s (%d)" % (
            row["note"], row["midi"], name, midi))
    if not abs(float(row["f0_hz"] or "nan") - f_hz) <= f_hz * (
            2.0 ** (CENTS_MARGIN / 1200.0) - 1.0):
        problems.append("f0 %s Hz, expected %.3f" % (row["f0_hz"], f_hz))
    if not abs(float(row["cents"] or "nan") - cents) <= CENTS_MARGIN:
        problems.append("%s cents, expected %.2f" % (row["cents"], cents))
    if not abs(float(row["peak_dbfs"] or "nan") - GENERATOR_PEAK_DBFS) <= LEVEL_MARGIN_DB:
        problems.append("peak %s dBFS, expected %.2f" % (
            row["peak_dbfs"], GENERATOR_PEAK_DBFS))
    if row["verdict"] != verdict:
        problems.append("verdict %s, expected %s" % (row["verdict"], verdict))
    return ["%s: %s" % (where, p) for p in problems]


def notes(args):
    reference = None
    if "--timeline" in args:
        at = args.index("--timeline")
        reference = read_rows(args[at + 1])
        args = args[:at]
    log, verdict, ports = args[0], args[1], [int(p) for p in args[2:]]
    rows = read_rows(log)
    if len(rows) != len(ports):
        return ["%d rows, %d notes recorded" % (len(rows), len(ports))]
    problems = []
    for row, port in zip(rows, ports):
        problems += check_row(row, port, verdict)
    if reference is not None:
        if len(reference) != len(rows):
            return problems + ["reference log has %d rows" % len(reference)]
        for row, ref in zip(rows, reference):
            moved_s = float(row["timeline_s"]) - float(ref["timeline_s"])
            if not abs(moved_s) <= TIMELINE_MARGIN_S:
                problems.append("row %s: timeline_s %s, recorded at %s" % (
                    row["index"], row["timeline_s"], ref["timeline_s"]))
    return problems


def run(args):
    with open(args[0], encoding="utf-8") as f:
        data = json.load(f)
    problems = []
    for pair in args[1:]:
        key, wanted = pair.split("=", 1)
        value = data
        for part in key.split("."):
            value = value.get(part) if isinstance(value, dict) else None
        if value != json.loads(wanted):
            problems.append("%s is %s, expected %s" % (
                key, json.dumps(value, ensure_ascii=False), wanted))
    return problems


def wav(args):
    path, frames, peak_dbfs = args[0], int(args[1]), float(args[2])
    with wave.open(path) as w:
        shape = (w.getnchannels(), w.getsampwidth(), w.getframerate(), w.getnframes())
        data = w.readframes(w.getnframes())
    if shape != (2, 2, SAMPLE_RATE_HZ, frames):
        return ["channels, bytes, rate, frames = %s; expected (2, 2, %d, %d)" % (
            shape, SAMPLE_RATE_HZ, frames)]
    samples = memoryview(data).cast("h")
    peak = max(max(samples), -min(samples)) if len(samples) else 0
    got_dbfs = 20.0 * math.log10(peak / 32768.0) if peak else -math.inf
    if not abs(got_dbfs - peak_dbfs) <= LEVEL_MARGIN_DB:
        return ["peak %.2f dBFS, expected %.2f" % (got_dbfs, peak_dbfs)]
    return []


def main(argv):
    command, args = argv[1], argv[2:]
    if command == "stem":
        print(stem(args[0]))
        return 0
    problems = {"notes": notes, "run": run, "wav": wav}[command](args)
    for problem in problems:
        print(problem)
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
