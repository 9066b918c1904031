#!/usr/bin/env bash
# Compares two results folders file by file: byte-identical, or identical once times and
# each folder's own path are masked (the change log's times, the page's time and folder).
# Usage: .ci/same-results.sh OLD/results NEW/results, each made by
# `wetload watch DIR --once` on its own copy of meshes/ (old binary, new binary).
set -euo pipefail
a=$(realpath "$1"); b=$(realpath "$2")
mask() { # file, the folder that holds its results/
  sed -E "s#$2#<DIR>#g; s/[0-9]{4}-[0-9]{2}-[0-9]{2}[T ][0-9]{2}:[0-9]{2}:[0-9]{2}(\.[0-9]+)?( ?[+-][0-9]{2}:[0-9]{2}|Z)?/<TIME>/g" "$1"
}
diff <(cd "$a" && ls) <(cd "$b" && ls) || { echo "the file lists differ"; exit 1; }
n=0; same=0; masked=0; differ=0
for f in $(cd "$a" && ls); do
  n=$((n + 1))
  if cmp -s "$a/$f" "$b/$f"; then same=$((same + 1));
  elif diff -q <(mask "$a/$f" "$(dirname "$a")") <(mask "$b/$f" "$(dirname "$b")") >/dev/null; then
    masked=$((masked + 1)); echo "identical once times and folder are masked: $f"
  else
    differ=$((differ + 1)); echo "DIFFERS: $f"
    diff <(mask "$a/$f" "$(dirname "$a")") <(mask "$b/$f" "$(dirname "$b")") | head -5 || true
  fi
done
echo "$n files: $same byte-identical, $masked identical once masked, $differ differ"
[ "$differ" -eq 0 ]
