#!/usr/bin/python3
"""Side by side: sheetwalk's integrate and mpmath's quad on five
endpoint-singular integrals, each to 1e-12 relative error.

Run by hand after building the benchmark:
    cmake --build build --target bench_integrate
    /usr/bin/python3 tests/bench/integrate_vs_mpmath.py [build/tests/bench/bench_integrate]

mpmath (Debian's python3-mpmath, used by /usr/bin/python3) is run with its
default method (tanh-sinh) at increasing working precision (mp.dps) until its
result is within 1e-12 of the reference; its integrand evaluations are
counted by wrapping the integrand, and its time is the best of three calls at
that precision (nodes cached, the most favourable figure for mpmath).  The
reference values come from closed forms evaluated by mpmath at 50 digits
(DLMF 5.12.1, 19.2.8, 5.12.3 with 5.5.3; a series for the second one).
Not a test: figures only.
"""
import json
import subprocess
import sys
import time

import mpmath as mp

TARGET = 1e-12


def cases():
    # name: (integrand(x) in mpmath, interval, reference at 50 digits)
    mp.mp.dps = 50
    refs = {
        "beta": mp.beta(mp.mpf(1) - mp.mpf("0.63"), mp.mpf(1) - mp.mpf("0.19")),
        "strong": mp.nsum(lambda n: 1 / (mp.factorial(n) * (n + mp.mpf("0.1"))), [0, mp.inf]),
        "elliptic": -mp.ellipk(mp.mpf("0.81")),
        "log": mp.mpf(-4),
        "ray": mp.pi / mp.sin(mp.mpf("0.3") * mp.pi),
    }
    fns = {
        "beta": (lambda x: x ** mp.mpf("-0.63") * (1 - x) ** mp.mpf("-0.19"), [0, 1]),
        "strong": (lambda x: x ** mp.mpf("-0.9") * mp.exp(x), [0, 1]),
        "elliptic": (lambda x: -1 / mp.sqrt((1 - x ** 2) * (1 - mp.mpf("0.81") * x ** 2)), [0, 1]),
        "log": (lambda x: mp.log(x) / mp.sqrt(x), [0, 1]),
        "ray": (lambda x: x ** mp.mpf("-0.7") / (1 + x), [0, mp.inf]),
    }
    return [(k, fns[k][0], fns[k][1], refs[k]) for k in refs]


def run_mpmath(f, interval, ref):
    for dps in (15, 20, 25, 30, 35, 40, 50, 60, 80, 100, 120, 150, 200):
        mp.mp.dps = dps
        count = [0]

        def g(x):
            count[0] += 1
            return f(x)

        v = mp.quad(g, interval)
        rel = float(abs(v - ref) / abs(ref))
        if rel <= TARGET:
            evals = count[0]
            best = float("inf")
            for _ in range(3):
                t0 = time.perf_counter()
                mp.quad(f, interval)
                best = min(best, time.perf_counter() - t0)
            return dps, rel, evals, best
    return None, rel, count[0], float("nan")


def run_sheetwalk(binary):
    out = subprocess.run([binary, "--json"], capture_output=True, text=True, check=True).stdout
    return {d["name"]: d for d in map(json.loads, out.splitlines())}


def main():
    binary = sys.argv[1] if len(sys.argv) > 1 else "build/tests/bench/bench_integrate"
    sw = run_sheetwalk(binary)
    print("to 1e-12 relative error; time per integral (sheetwalk: best of 20 batches of 10 "
          "calls; mpmath: best of 3 calls, nodes cached)")
    print(f"{'integral':9} | {'sheetwalk rel.err':>17} {'evals':>6} {'time':>10} | "
          f"{'mpmath dps':>10} {'rel.err':>9} {'evals':>6} {'time':>10} | "
          f"{'evals ratio':>11} {'time ratio':>10}")
    for name, f, interval, ref in cases():
        s = sw[name]
        dps, rel, ev, secs = run_mpmath(f, interval, ref)
        print(f"{name:9} | {s['relerr']:17.1e} {s['evaluations']:6d} {s['seconds']*1e6:8.0f}us | "
              f"{str(dps):>10} {rel:9.1e} {ev:6d} {secs*1e6:8.0f}us | "
              f"{ev / s['evaluations']:11.1f} {secs / s['seconds']:10.0f}")


if __name__ == "__main__":
    main()
