# Reads what tests/torture.sh captured: the summary `plumb scan` and
# `plumb report` print (the layout of docs/command.md, "Output"), the
# logs in a folder (docs/log-format.md), and the raw bytes of the output.
#
#   summary.py row OUT LABEL      "NOTES FLAGGED UNPITCHED" of LABEL's row of
#                                 the counts table (exit 1: not listed,
#                                 exit 4: listed more than once)
#   summary.py row-renamed OUT LABEL   the same, for LABEL or, when no row
#                                 is LABEL, LABEL-N (docs/command.md: the
#                                 later of two tracks whose logs would
#                                 clash gets -2, -3 ...)
#   summary.py rows OUT           the number of rows of the counts table
#   summary.py flagged OUT        the flagged rows' "NOTE VERDICT", one a line
#   summary.py log DIR LABEL      the notes of the one log whose run.json has
#                                 take_label LABEL: "NOTE VERDICT" a row
#                                 (exit 1: none, exit 4: more than one)
#   summary.py log-renamed DIR LABEL   the same, for LABEL or LABEL-N
#   summary.py clean FILE...      the bytes are UTF-8 and hold no control
#                                 character but the line feed: no C0 (ESC
#                                 included), DEL or C1 (U+0080..U+009F), the
#                                 ranges ECMA-48 (5th ed., 1991) assigns to
#                                 control functions
import csv
import json
import os
import re
import sys

COUNTS_HEADER = re.compile(r"^take\s+notes\s+flagged\s+unpitched\s*$")
FLAGGED_HEADER = re.compile(r"^take\s+time\s+note\s+cents\s+verdict\s*$")


def section(lines, header):
    """The rows after the header line, up to a blank line."""
    for i, line in enumerate(lines):
        if header.match(line):
            rows = []
            for row in lines[i + 1:]:
                if not row.strip():
                    break
                rows.append(row)
            return rows
    return []


def counts(lines):
    """(label, notes, flagged, unpitched) of each counts row."""
    found = []
    for row in section(lines, COUNTS_HEADER):
        match = re.match(r"^(.*?)\s+(\d+)\s+(\d+)\s+(\d+)\s*$", row)
        found.append((match.group(1).strip(), match.group(2), match.group(3),
                      match.group(4)) if match else (row, "?", "?", "?"))
    return found


def read_lines(path):
    with open(path, "rb") as source:
        return source.read().decode("utf-8", "replace").split("\n")


def renamed(wanted, label):
    return re.fullmatch(re.escape(wanted) + r"-[0-9]+", label) is not None


def log_notes(folder, label, allow_renamed=False):
    matches = []
    renames = []
    for name in sorted(os.listdir(folder)):
        if not name.endswith(".run.json"):
            continue
        try:
            with open(os.path.join(folder, name), encoding="utf-8",
                      errors="surrogateescape") as source:
                run = json.load(source)
        except (OSError, ValueError):
            continue
        if run.get("take_label") == label:
            matches.append(run)
        elif allow_renamed and renamed(label, run.get("take_label") or ""):
            renames.append(run)
    if not matches:
        matches = renames
    if len(matches) != 1:
        print("%d run.json files in %s have take_label %r: %s" % (
            len(matches), folder, label,
            " ".join(sorted(os.listdir(folder)))[:600]))
        sys.exit(1 if not matches else 4)
    notes_file = os.path.join(folder, matches[0].get("notes_file", ""))
    with open(notes_file, newline="") as source:
        for row in csv.DictReader(source):
            print(row.get("note") or "-", row.get("verdict"))


def clean(paths):
    problems = []
    for path in paths:
        data = open(path, "rb").read()
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as error:
            problems.append("%s: not UTF-8 (%s)" % (path, error))
            text = data.decode("latin-1")
        for i, char in enumerate(text):
            code = ord(char)
            if (code < 0x20 and char != "\n") or 0x7F <= code <= 0x9F:
                line = text.count("\n", 0, i) + 1
                problems.append("%s: raw control character U+%04X on line %d: %r"
                                % (path, code, line, text.split("\n")[line - 1][:100]))
                break
    if problems:
        sys.exit("\n".join(problems))


def main(argv):
    command = argv[1]
    if command in ("row", "row-renamed"):
        found = counts(read_lines(argv[2]))
        rows = [row for row in found if row[0] == argv[3]]
        if not rows and command == "row-renamed":
            rows = [row for row in found if renamed(argv[3], row[0])]
        if not rows:
            sys.exit(1)
        print(" ".join(rows[0][1:]))
        sys.exit(4 if len(rows) > 1 else 0)
    if command == "rows":
        print(len(counts(read_lines(argv[2]))))
    elif command == "flagged":
        for row in section(read_lines(argv[2]), FLAGGED_HEADER):
            fields = row.split()
            print("%s %s" % (fields[-3], fields[-1]) if len(fields) >= 5
                  else row)
    elif command in ("log", "log-renamed"):
        log_notes(argv[2], argv[3], command == "log-renamed")
    elif command == "clean":
        clean(argv[2:])
    else:
        sys.exit("unknown command %r" % command)


if __name__ == "__main__":
    main(sys.argv)
