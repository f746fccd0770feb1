#!/usr/bin/python3
"""Reference check of the statistics constants and approximations tram uses,
against SciPy's scipy.stats (Debian python3-scipy):

- the chi-square quantiles of the mount check (tram_check_chi2_quantile,
  Wilson & Hilferty 1931) at the tail probabilities it uses, for the degrees
  of freedom of 1 to 100 stations: within 1.2% of scipy.stats.chi2.ppf, and
  never below it by more than 0.1% (a test may be conservative, not lax);
- the constants in src/solve/solve.c: sqrt of the median of chi2(3) and sqrt of
  its 0.9999 quantile; and the normal quantiles in src/check/check.c.
"""
import os
import re
import subprocess
import sys

from scipy.stats import chi2, norm


def main():
    helper = os.path.abspath(sys.argv[1])
    root = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")
    fails = checks = 0

    def expect(name, ok, detail):
        nonlocal fails, checks
        checks += 1
        fails += 0 if ok else 1
        print(f"{'ok  ' if ok else 'FAIL'} {name}: {detail} (SciPy scipy.stats)")

    probs = {"1 - 0.01/3": 1 - 0.01 / 3, "0.999": 0.999}
    ks = [6 * n for n in range(1, 101)] + [6 * n - 6 for n in range(2, 101)]
    lines = []
    for p in probs.values():
        for k in ks:
            lines.append(f"chi2q {k} {norm.ppf(p)!r}")
    out = subprocess.run([helper], input="\n".join(lines) + "\n", capture_output=True, text=True,
                         check=True).stdout.split()
    i = 0
    for name, p in probs.items():
        worst_hi = worst_lo = 0.0
        for k in ks:
            rel = float(out[i]) / chi2.ppf(p, k) - 1.0
            worst_hi = max(worst_hi, rel)
            worst_lo = min(worst_lo, rel)
            i += 1
        expect(f"chi2 quantile at p = {name}, k = 6..600", worst_hi <= 0.012 and worst_lo >= -0.001,
               f"relative error {worst_lo:+.4f} .. {worst_hi:+.4f}")

    solve = open(os.path.join(root, "src", "solve", "solve.c")).read()
    check = open(os.path.join(root, "src", "check", "check.c")).read()
    c1 = float(re.search(r"#define CHI3_MEDIAN_SQRT ([0-9.]+)", solve).group(1))
    c2 = float(re.search(r"#define OUTLIER_K ([0-9.]+)", solve).group(1))
    z1 = float(re.search(r"#define Z_ALPHA3 ([0-9.]+)", check).group(1))
    z2 = float(re.search(r"#define Z_STATION ([0-9.]+)", check).group(1))
    expect("sqrt(median of chi2(3))", abs(c1 - chi2.median(3) ** 0.5) < 1e-6, f"{c1}")
    expect("sqrt(chi2(3) 0.9999 quantile)", abs(c2 - chi2.ppf(0.9999, 3) ** 0.5) < 1e-4, f"{c2}")
    expect("normal quantile at 1 - 0.01/3", abs(z1 - norm.ppf(1 - 0.01 / 3)) < 1e-6, f"{z1}")
    expect("normal quantile at 0.999", abs(z2 - norm.ppf(0.999)) < 1e-6, f"{z2}")
    print(f"{checks - fails} passed, {fails} failed")
    return 1 if fails else 0


if __name__ == "__main__":
    sys.exit(main())
