#!/usr/bin/env bash
# Run every fuzz target briefly (default 20 s each) from the committed corpus; fails on a crash.
# Needs a nightly toolchain and cargo-fuzz (`cargo install cargo-fuzz`). Usage:
#   tests/fuzz/ci-smoke.sh [SECONDS]
set -euo pipefail
cd "$(dirname "$0")/../.."
seconds="${1:-20}"
for target in parse analyze data_readers lsp_frames; do
    # a scratch copy so that the committed corpus is not grown by CI
    scratch="$(mktemp -d)"
    cp tests/fuzz/corpus/"$target"/* "$scratch"/
    echo "fuzz $target for ${seconds}s"
    cargo +nightly fuzz run --fuzz-dir tests/fuzz "$target" "$scratch" -- \
        -max_total_time="$seconds" -rss_limit_mb=2048 -max_len=65536 -print_final_stats=1
    rm -rf "$scratch"
done
