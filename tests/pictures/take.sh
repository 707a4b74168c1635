#!/bin/sh
# Screenshots of each window area for the README, taken from the release
# binary under Xvfb with Mesa's software OpenGL.
# Needs: Debian packages xvfb, libgl1-mesa-dri, imagemagick (for `import`).
# Usage: tests/pictures/take.sh   (from the repository root; writes assets/*.png)
set -eu
bin="${CARGO_TARGET_DIR:-target}/release/plumbline"
[ -x "$bin" ] || cargo build --release
display=:97
Xvfb "$display" -screen 0 1280x800x24 -nolisten tcp >/dev/null 2>&1 &
xvfb=$!
trap 'kill $xvfb 2>/dev/null' EXIT
sleep 1

# shot NAME SOURCE [window options…]: opens SOURCE, waits, saves assets/NAME.png
shot() {
    name=$1; source=$2; shift 2
    DISPLAY=$display LIBGL_ALWAYS_SOFTWARE=1 "$bin" "$source" "$@" &
    app=$!
    sleep "${PLUMBLINE_SHOT_WAIT:-6}"
    DISPLAY=$display import -window root "assets/$name.png"
    kill $app
    wait $app 2>/dev/null || true
    echo "assets/$name.png"
}

shot field-sheet sample-data/deliveries.parquet --field parcel.weight_kg
shot field-sheet-text sample-data/deliveries.jsonl --field zip_code
shot rows sample-data/deliveries.parquet --area rows
shot findings sample-data/deliveries.parquet --area findings
shot record-types sample-data/deliveries.parquet --area record-types
shot compare sample-data/deliveries.parquet --compare sample-data/later/deliveries.parquet
