#!/usr/bin/python3
"""Reference check of the statistics constants and approximations tram uses,
against SciPy's scipy.stats (Debian python3-scipy):

- the chi-square quantiles of the mount check (tram_check_chi2_quantile,
  Wilson & Hilferty 1931) at the tail probabilities it uses, for the degrees
  of freedom of 1 to 100 stations: within 1.2% of scipy.stats.chi2.ppf, and
  never below it by more than 0.1% (a test may be conservative, not lax);
- the constants in src/math/stats.c and src/solve/solve_refine.c: sqrt of the median of chi2(3) and sqrt of
  its 0.9999 quantile; and the normal quantiles in src/check/check.c;
- Student's t, Fisher's F and chi-square quantiles (src/math/stats.c, used by the solve's
  intervals and its outlier test) against scipy.stats.t.ppf and f.ppf, to a
  relative 1e-8, at the probabilities and degrees of freedom they serve.
"""
import os
import re
import subprocess
import sys

from scipy.stats import chi2, f as fdist, norm, t as tdist


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

    tcases = [(p, nu) for p in (0.975, 0.995, 0.6, 0.025) for nu in (1, 1.5, 2, 3, 4.7, 6, 13, 30, 78, 600)]
    fcases = [(p, d1, d2) for p in (0.99, 1 - 0.01 / 5, 1 - 0.01 / 15, 1 - 0.01 / 100, 0.5)
              for d1 in (3, 6) for d2 in (2, 6, 12, 18, 66, 594, 5988)]
    ccases = [(p, k) for p in (0.9999, 1 - 0.01 / 60, 1 - 0.01 / 2000, 0.5, 0.05) for k in (1, 3, 6, 30, 300)]
    lines = [f"tq {p!r} {nu!r}" for p, nu in tcases] + [f"fq {p!r} {a!r} {b!r}" for p, a, b in fcases] + \
        [f"cq {p!r} {k!r}" for p, k in ccases]
    out = subprocess.run([helper], input="\n".join(lines) + "\n", capture_output=True, text=True,
                         check=True).stdout.split()
    worst = max(abs(float(o) / tdist.ppf(p, nu) - 1) for o, (p, nu) in zip(out, tcases))
    expect("Student t quantiles", worst < 1e-8, f"{len(tcases)} cases, worst relative error {worst:.1e}")
    out = out[len(tcases):]
    worst = max(abs(float(o) / fdist.ppf(p, a, b) - 1) for o, (p, a, b) in zip(out, fcases))
    expect("F quantiles", worst < 1e-9, f"{len(fcases)} cases, worst relative error {worst:.1e}")
    out = out[len(fcases):]
    worst = max(abs(float(o) / chi2.ppf(p, k) - 1) for o, (p, k) in zip(out, ccases))
    expect("chi-square quantiles", worst < 1e-9, f"{len(ccases)} cases, worst relative error {worst:.1e}")

    stats = open(os.path.join(root, "src", "math", "stats.c")).read()
    solve = open(os.path.join(root, "src", "solve", "solve_refine.c")).read()
    check = open(os.path.join(root, "src", "check", "check.c")).read()
    c1 = float(re.search(r"#define CHI3_MEDIAN_SQRT ([0-9.]+)", stats).group(1))
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
