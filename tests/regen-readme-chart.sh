#!/usr/bin/env bash
# Regenerates the chart shown in README.md from the demo (tests/draw_cli.rs checks it is current).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo run --quiet -- draw demo-data/ferry-monthly-trend.chart.json -o demo-data/pictures >/dev/null
