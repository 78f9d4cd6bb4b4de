#!/bin/sh
# Makes a folder of N deal files (the example deals copied in turn, with the CSV files
# they read) under bench/out/, then times `candor pack` over it with /usr/bin/time -v
# (wall clock and peak resident memory). See bench/README.md.
#
#     bench/pack.sh [CANDOR] [N] [RUNS]     defaults: target/release/candor 100 3
#
# With DISTINCT=1 the copies differ: copy k of a deal has its hurdle rate moved up by
# k hundredths of a percentage point, so that no two memos are alike (every figure at
# the hurdle changes); the folder is then bench/out/distinct-N.
set -eu
here=$(cd "$(dirname "$0")" && pwd)
root=$(dirname "$here")
candor=${1:-$root/target/release/candor}
n=${2:-100}
runs=${3:-3}
if [ "${DISTINCT:-}" = 1 ]; then
    dir=$here/out/distinct-$n
    if [ ! -f "$dir/.complete" ]; then
        rm -rf "$dir"
        mkdir -p "$dir"
        python3 - "$root/example-deals" "$dir" "$n" <<'PY'
import glob, os, re, shutil, sys
src_dir, out, n = sys.argv[1], sys.argv[2], int(sys.argv[3])
for csv in glob.glob(os.path.join(src_dir, "*.csv")):
    shutil.copy(csv, out)
deals = sorted(glob.glob(os.path.join(src_dir, "*.yaml")))
for i in range(n):
    path = deals[i % len(deals)]
    k = i // len(deals) + 1
    def moved(m):
        if m.group(3):
            return f"{m.group(1)}{float(m.group(2)) + 0.01 * k:.2f}%{m.group(4)}"
        return f"{m.group(1)}{float(m.group(2)) + 0.0001 * k:.4f}{m.group(4)}"
    with open(path, encoding="utf-8") as f:
        text, count = re.subn(r'^(hurdle_rate: "?)([0-9.]+)(%?)("?)', moved, f.read(), count=1, flags=re.M)
    if count != 1:
        sys.exit(f"{path}: no top-level hurdle_rate line")
    with open(os.path.join(out, f"{i:04d}-{os.path.basename(path)}"), "w", encoding="utf-8") as f:
        f.write(text)
PY
        touch "$dir/.complete"
    fi
else
dir=$here/out/deals-$n
fi
if [ ! -f "$dir/.complete" ]; then
    rm -rf "$dir"
    mkdir -p "$dir"
    cp "$root"/example-deals/*.csv "$dir"/
    set -- "$root"/example-deals/*.yaml
    count=$#
    i=0
    while [ "$i" -lt "$n" ]; do
        k=$((i % count + 1))
        eval "src=\${$k}"
        cp "$src" "$dir/$(printf '%04d' "$i")-$(basename "$src")"
        i=$((i + 1))
    done
    touch "$dir/.complete"
fi
export SOURCE_DATE_EPOCH=1798675200
echo "machine: $(lscpu | sed -n 's/^Model name: *//p'), $(nproc) cores; load: $(uptime | sed 's/.*load average: //')"
echo "candor: $candor ($("$candor" --version))"
r=1
while [ "$r" -le "$runs" ]; do
    /usr/bin/time -v "$candor" pack "$dir"/*.yaml -o "$here/out/pack-$n.pdf" \
        2> "$here/out/pack-$n.time" > /dev/null || { tail -n 30 "$here/out/pack-$n.time"; exit 1; }
    wall=$(sed -n 's/.*Elapsed (wall clock) time (h:mm:ss or m:ss): //p' "$here/out/pack-$n.time")
    rss=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$here/out/pack-$n.time")
    cpu_user=$(sed -n 's/.*User time (seconds): //p' "$here/out/pack-$n.time")
    cpu_sys=$(sed -n 's/.*System time (seconds): //p' "$here/out/pack-$n.time")
    echo "pack of $n deals, run $r: wall $wall, peak RSS $((rss / 1024)) MiB, user $cpu_user s, sys $cpu_sys s"
    r=$((r + 1))
done
echo "pages: $(pdfinfo "$here/out/pack-$n.pdf" 2>/dev/null | sed -n 's/^Pages: *//p'), bytes: $(wc -c < "$here/out/pack-$n.pdf")"
