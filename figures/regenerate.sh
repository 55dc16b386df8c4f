#!/usr/bin/env bash
# Regenerates every committed figure: the demo (configs/demo_surface.toml, embedded) and one map
# and a phase diagram of the weak-coupling reference pair (configs/reference/nested_parabolic.toml),
# and a pattern of the heavy-pocket pair (configs/reference/heavy_pockets.toml).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release
./target/release/nestor demo --out figures
./target/release/nestor scan configs/reference/nested_parabolic.toml \
  --vary h.offset=100.0:100.3:31 --vary eh.cutoff=4.5:5.5:11 --out figures/map
cp figures/map/scan_tc_eh.png figures/map_tc_eh.png
cp figures/map/scan_tc_eh.svg figures/map_tc_eh.svg
./target/release/nestor phases configs/reference/nested_parabolic.toml \
  --vary h.offset=100.0:100.4:41 --temperatures 41 --out figures/map
cp figures/map/phases_eh.png figures/phases_eh.png
cp figures/map/phases_eh.svg figures/phases_eh.svg
./target/release/nestor pattern configs/reference/heavy_pockets.toml \
  --set h.offset=6.05 --temperature 0.4 --fov 250 --out figures/map
cp figures/map/pattern_eh.png figures/pattern_eh_heavy.png
cp figures/map/pattern_eh.svg figures/pattern_eh_heavy.svg
./target/release/nestor phases configs/reference/nested_parabolic.toml \
  --vary h.offset=99.6:100.4:17 --temperatures 11 --uniform-only --out figures/nesting
cp figures/nesting/phases_eh.png figures/phases_eh_nesting.png
cp figures/nesting/phases_eh.svg figures/phases_eh_nesting.svg
