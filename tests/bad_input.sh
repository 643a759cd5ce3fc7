#!/bin/sh
# Driver of the bad-input table (tests/bad_input.py): truncated, empty, mislabelled, huge and
# pathological inputs must each give their exit status and one-line message, in time; and of
# the hostile file systems and processes of tests/bad_input_fs.py.
set -u
PYTHON3=${PYTHON3:-/usr/bin/python3}
bin=${top_builddir:-.}/lineate
[ -x "$bin" ] || { echo "no lineate binary"; exit 77; }
"$PYTHON3" -c 'import numpy, PIL' 2>/dev/null || { echo "python3 numpy/PIL missing"; exit 77; }
"$PYTHON3" "${top_srcdir:-.}/tests/bad_input.py" "$bin" "${top_srcdir:-.}"
table=$?
# File systems and processes: link loops, FIFOs, names, paths, permissions, signals, stdin.
"$PYTHON3" "${top_srcdir:-.}/tests/bad_input_fs.py" "$bin"
fs=$?
[ "$table" -eq 0 ] && [ "$fs" -eq 0 ]
