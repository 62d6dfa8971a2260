#!/usr/bin/env python3
"""Decides the real-space question with a general-purpose SMT solver (z3).

Does (R^n, sup-norm) hold an isometric p-cycle? Linear real arithmetic:
reals x[i][c] and a profile D[k] (k = 1..p//2), |x_i,c - x_j,c| <= D_k(i,j)
for every pair and coordinate, and for every pair a Boolean witness atom
t[i][j][c][s] that forces equality in coordinate c with sign s, one of which
must hold. Symmetry breaking is minimal: x_0 = 0, min_k D_k = 1 (scaling),
and the pair (0, 1) tight upward in coordinate 0 (a signed coordinate
permutation). Prints 'sat' or 'unsat' (and, with --model, the model), and
the seconds spent, as one JSON line.

Used by orbitcnf's tests as an independent cross-check of src/real.
"""
import json
import sys
import time

import z3


def decide(n, p, timeout_ms=None):
    m = p // 2
    s = z3.SolverFor("QF_LRA")
    if timeout_ms:
        s.set("timeout", timeout_ms)
    x = [[z3.Real(f"x_{i}_{c}") for c in range(n)] for i in range(p)]
    D = [z3.Real(f"D_{k}") for k in range(1, m + 1)]
    for c in range(n):
        s.add(x[0][c] == 0)
    for d in D:
        s.add(d >= 1)
    s.add(z3.Or([d == 1 for d in D]))

    def kappa(i, j):
        d = abs(i - j) % p
        return min(d, p - d)

    for i in range(p):
        for j in range(i + 1, p):
            dk = D[kappa(i, j) - 1]
            wit = []
            for c in range(n):
                diff = x[j][c] - x[i][c]
                s.add(diff <= dk, -diff <= dk)
                up = z3.Bool(f"u_{i}_{j}_{c}")
                dn = z3.Bool(f"l_{i}_{j}_{c}")
                s.add(z3.Implies(up, diff == dk), z3.Implies(dn, -diff == dk))
                wit += [up, dn]
            s.add(z3.Or(wit))
    if p >= 2:
        s.add(z3.Bool("u_0_1_0"))
    t0 = time.time()
    r = s.check()
    out = {"n": n, "p": p, "result": str(r), "seconds": round(time.time() - t0, 3)}
    if r == z3.sat and "--model" in sys.argv:
        mdl = s.model()
        out["D"] = [str(mdl.eval(d)) for d in D]
    return out


def main():
    args = [a for a in sys.argv[1:] if not a.startswith("--")]
    n, p = int(args[0]), int(args[1])
    timeout = int(args[2]) * 1000 if len(args) > 2 else None
    print(json.dumps(decide(n, p, timeout)))


if __name__ == "__main__":
    main()
