"""Merge the benchmark programs' JSON arrays into one (build/bench.json) and
say whether the targets of docs/performance.md are met (a benchmark helper,
never product code).  Usage: merge.py OUT IN.json...
"""
import json
import sys


def main():
    out, parts = sys.argv[1], sys.argv[2:]
    rows = []
    for p in parts:
        with open(p) as f:
            rows.extend(json.load(f))
    with open(out, "w") as f:
        json.dump(rows, f, indent=1)
        f.write("\n")
    big = [r for r in rows if r["name"] == "register" and r["n"] == 10_000_000]
    if big:
        r = big[0]
        print(f"registration at 1e7 pairs: {r['ratio_vs_numpy']:.1f}x NumPy (target >= 25), "
              f"{100 * r['bandwidth_fraction']:.0f}% of the measured read bandwidth (target >= 70)")
    print(f"wrote {out} ({len(rows)} measurements)")


if __name__ == "__main__":
    main()
