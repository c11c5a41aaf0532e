"""Reference figures for tests/benches/eval.rs: the sum of `fare_eur` per `port` of the generated
CSV with polars (all cores), once eagerly (read the whole file, then group) and once lazily
(scan only the two columns). Prints `library`, then per way `way NAME seconds CPU_SECONDS`, the
sums as `sum PORT VALUE`, and `peak_rss_mib`; prints `MISSING ...` when polars is not installed.

Install: python3 -m pip install polars
"""

import resource
import sys
import time


def cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_SELF)
    return usage.ru_utime + usage.ru_stime


def main() -> int:
    if len(sys.argv) != 2:
        print("usage: bench_eval_polars.py FILE.csv", file=sys.stderr)
        return 2
    try:
        import polars as pl
    except ImportError:
        print("MISSING polars (python3 -m pip install polars)")
        return 0
    path = sys.argv[1]
    print(f"library polars {pl.__version__}")
    ways = [
        ("lazy", lambda: pl.scan_csv(path, null_values=["NA", ""])
            .group_by("port").agg(pl.col("fare_eur").sum()).collect()),
        ("eager", lambda: pl.read_csv(path, null_values=["NA", ""])
            .group_by("port").agg(pl.col("fare_eur").sum())),
    ]
    result = None
    for name, run in ways:
        started, cpu_before = time.perf_counter(), cpu()
        result = run()
        print(f"way {name} {time.perf_counter() - started:.3f} {cpu() - cpu_before:.3f}")
    for port, total in result.sort("port").iter_rows():
        print(f"sum {port} {total!r}")
    # ru_maxrss is in KiB on Linux (the eager way sets it)
    print(f"peak_rss_mib {resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024:.1f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
