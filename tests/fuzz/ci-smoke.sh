#!/usr/bin/env bash
# The fuzz smoke that .ci/test runs: builds every fuzz target in one `cargo fuzz build` (the
# dependencies are built once), then runs each for SECONDS (default 20) from a scratch copy of
# the committed corpus, so that the corpus in git is never grown. Fails on a crash, a timeout,
# an out-of-memory, a run that reports no coverage, and a stale tests/fuzz/Cargo.lock.
# Without a nightly toolchain it is skipped, saying so (exit 0).
#
# It builds without AddressSanitizer and with 16 codegen units: a fast build for CI that still
# fuzzes with libFuzzer's coverage feedback, catches every panic, failed assertion, overflow
# (debug assertions are on), hang and memory blow-up. ASan adds checks for memory errors in
# unsafe code; markwell has no unsafe code of its own, so ASan only guards the dependencies'
# unsafe code, and it stays the default for the long manual runs (`cargo fuzz run` without
# flags; see DEVELOPERS.md, "Fuzzing"). MARKWELL_FUZZ_SANITIZER=address runs the smoke with it.
#
# Usage (from anywhere): tests/fuzz/ci-smoke.sh [SECONDS]
set -euo pipefail
cd "$(dirname "$0")/../.."
seconds="${1:-20}"
targets=(parse analyze data_readers lsp_frames)

if ! cargo +nightly --version >/dev/null 2>&1; then
    echo "fuzz smoke: skipped, no nightly Rust toolchain (rustup toolchain install nightly)"
    exit 0
fi
if ! cargo +nightly fuzz --version >/dev/null 2>&1; then
    echo "fuzz smoke: cargo-fuzz is missing; .ci/setup installs the pinned version" >&2
    exit 2
fi

flags=(--fuzz-dir tests/fuzz --sanitizer "${MARKWELL_FUZZ_SANITIZER:-none}" --codegen-units 16)
lock_before="$(cksum < tests/fuzz/Cargo.lock)"
start=$SECONDS
cargo +nightly fuzz build "${flags[@]}"
echo "fuzz smoke: built ${#targets[@]} targets in $((SECONDS - start)) s"
if [[ "$(cksum < tests/fuzz/Cargo.lock)" != "$lock_before" ]]; then
    echo "fuzz smoke: the build changed tests/fuzz/Cargo.lock (out of date with Cargo.toml); commit it" >&2
    exit 1
fi

scratch="$(mktemp -d)"
trap 'rm -rf "$scratch"' EXIT
for target in "${targets[@]}"; do
    mkdir "$scratch/$target"
    cp tests/fuzz/corpus/"$target"/* "$scratch/$target"/
    echo "fuzz smoke: $target for ${seconds} s"
    # the same flags as the build, so this does not rebuild; libFuzzer adds new inputs to the
    # first folder (the scratch copy) and writes a crashing input under tests/fuzz/artifacts
    # (libFuzzer prints a line per new input: its log is kept aside and shown on a failure)
    if ! cargo +nightly fuzz run "${flags[@]}" "$target" "$scratch/$target" -- \
        -max_total_time="$seconds" -timeout=60 -rss_limit_mb=2048 -max_len=65536 \
        -print_final_stats=1 >"$scratch/$target.log" 2>&1; then
        tail -n 80 "$scratch/$target.log" >&2
        echo "fuzz smoke: $target failed; the input is under tests/fuzz/artifacts/$target" >&2
        exit 1
    fi
    # a build without coverage instrumentation would "fuzz" blind: require coverage
    coverage="$(sed -n 's/.*INITED cov: \([0-9]*\).*/\1/p' "$scratch/$target.log" | head -1)"
    if [[ -z "$coverage" || "$coverage" == 0 ]]; then
        echo "fuzz smoke: $target reported no coverage" >&2
        exit 1
    fi
    runs="$(sed -n 's/^stat::number_of_executed_units: *//p' "$scratch/$target.log")"
    echo "fuzz smoke: $target ran ${runs:-?} inputs, initial coverage $coverage"
done
