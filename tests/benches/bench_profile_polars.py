"""Reference figures for tests/benches/bench_profile.rs: load a CSV with polars (all cores), then per
column count nulls, distinct values, min and max. Prints `library`, `seconds`,
`cpu_seconds` and `peak_rss_mib` lines; prints `MISSING ...` when polars is not installed.

Install: python3 -m pip install polars
"""

import resource
import sys
import time


def main() -> int:
    if len(sys.argv) != 2:
        print("usage: bench_profile_polars.py FILE.csv", file=sys.stderr)
        return 2
    try:
        import polars as pl
    except ImportError:
        print("MISSING polars (python3 -m pip install polars)")
        return 0
    path = sys.argv[1]
    started = time.perf_counter()
    usage_before = resource.getrusage(resource.RUSAGE_SELF)
    frame = pl.read_csv(path, null_values=["NA", ""], try_parse_dates=True)
    summaries = []
    for name in frame.columns:
        column = frame.get_column(name)
        summaries.append(
            (name, column.null_count(), column.n_unique(), column.min(), column.max())
        )
    seconds = time.perf_counter() - started
    usage_after = resource.getrusage(resource.RUSAGE_SELF)
    cpu_seconds = (usage_after.ru_utime + usage_after.ru_stime) - (
        usage_before.ru_utime + usage_before.ru_stime
    )
    # ru_maxrss is in KiB on Linux
    peak_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    for name, nulls, distinct, low, high in summaries:
        print(f"column {name} nulls={nulls} distinct={distinct} min={low} max={high}")
    print(f"library polars {pl.__version__}")
    print(f"rows {frame.height}")
    print(f"seconds {seconds:.3f}")
    print(f"cpu_seconds {cpu_seconds:.3f}")
    print(f"peak_rss_mib {peak_kib / 1024:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
