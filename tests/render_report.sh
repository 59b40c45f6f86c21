#!/usr/bin/env bash
# Renders the HTML report of the bundled samples in headless Chromium to PNG
# pictures, to look at the page as a person would (labels that overlap,
# axes that cannot be read, tables cut off). Not part of CI: the tests check
# the page without a browser.
#
#   tests/render_report.sh [OUT_DIR]        (default: target/report-render)
#
# Needs Debian's Chromium (`apt-get install -y chromium`). With Python's
# Pillow installed, each tall screenshot is also cut into 1200x1500 tiles
# (NAME-tile-1.png, ...) that an image viewer shows at full size.
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
out=${1:-$root/target/report-render}
mkdir -p "$out"
out=$(cd "$out" && pwd)
cd "$root"
cargo build --quiet
bin=$root/target/debug/skewbook
browser=$(command -v chromium || command -v chromium-browser || true)
if [ -z "$browser" ]; then
    echo "error: chromium not found: apt-get install -y chromium" >&2
    exit 2
fi
height=${REPORT_HEIGHT:-12000}

render() {
    local name=$1
    shift
    # Exit status 1 (a quote with no solution) still writes the page.
    "$bin" report "$@" --out "$out/$name.html" >/dev/null || [ $? -eq 1 ]
    rm -f "$out/$name"-tile-*.png
    local profile
    profile=$(mktemp -d)
    "$browser" --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --hide-scrollbars --user-data-dir="$profile" \
        --screenshot="$out/$name.png" --window-size="1200,$height" \
        "file://$out/$name.html" >/dev/null 2>&1
    rm -rf "$profile"
    if python3 -c 'import PIL' 2>/dev/null; then
        python3 - "$out/$name.png" <<'PY'
import sys
from PIL import Image
path = sys.argv[1]
img = Image.open(path).convert("RGB")
w, h = img.size
# Trim the white space under the page.
bottom = h
px = img.load()
while bottom > 1 and all(px[x, bottom - 1] == (255, 255, 255) for x in range(0, w, 7)):
    bottom -= 1
img = img.crop((0, 0, w, min(h, bottom + 20)))
img.save(path)
tile = 1500
for i, top in enumerate(range(0, img.size[1], tile), start=1):
    img.crop((0, top, w, min(img.size[1], top + tile))).save(path[:-4] + f"-tile-{i}.png")
PY
    fi
    echo "$out/$name.png"
}

render hgx market-samples/hgx-2026-06-18.csv \
    --history market-samples/hgx-history-2026-06.csv \
    --defaults market-samples/hgx-default-rates.csv --at 5,10
render kcx market-samples/kcx-2026-06-18.csv
render lhy market-samples/lhy-2026-06-18.csv --defaults market-samples/lhy-default-counts.csv
