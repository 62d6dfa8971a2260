#!/usr/bin/env python3
"""Compares twin blow-ups in {-1,0,1}^n with plain cycles in {-1,0,1}^(n-1).

The observation of docs/math.md §11. For a base profile G of an h-cycle
(G(s) in {1, 2} for s = 1..h//2), the *twin blow-up* asks for 2h distinct
points a_0..a_{h-1}, b_0..b_{h-1} of {-1,0,1}^n with d(a_k, b_k) = 1 and
d(u, v) = G(l - k) for every u in {a_k, b_k}, v in {a_l, b_l}, k != l; the
*base question* asks for h distinct points of {-1,0,1}^(n-1) with
d(y_k, y_l) = G(l - k). (These are the isometric cycles of docs/math.md §1:
a blow-up is an isometric 2h-cycle x_i = a_i, x_{i+h} = b_i whose profile
has g(s) = g(h - s) and g(h) = 1.) A base solution gives a blow-up by
appending a coordinate, 0 for a_k and 1 for b_k; §11 records that the
converse held in every case this script has decided.

Each question is a small CNF (one-hot values per coordinate; a close pair
has no coordinate with values -1 and 1 and some coordinate that differs; a
far pair has a coordinate with values -1 and 1), decided by the `cadical`
on PATH (a general-purpose SAT solver, independent of orbitcnf).

Usage: twin_profiles.py N H [H ...] [--timeout SECS]
Prints one line per period h and a summary; exit code 1 on a mismatch.
"""
import itertools
import subprocess
import sys


def cnf(h, n, base, twins):
    """DIMACS text of the blow-up (twins) or of the base question."""
    count = 2 * h if twins else h
    var = {}

    def x(i, c, s):
        return var.setdefault((i, c, s), len(var) + 1)

    def dist(i, j):
        a, b = i % h, j % h
        if a == b:
            return 1
        s = (b - a) % h
        return base[min(s, h - s)]

    clauses = []
    for i in range(count):
        for c in range(n):
            one = [x(i, c, s) for s in (-1, 0, 1)]
            clauses.append(one)
            clauses.extend([-u, -v] for u, v in itertools.combinations(one, 2))
    top = [len(var)]

    def fresh():
        top[0] += 1
        return top[0]

    for i, j in itertools.combinations(range(count), 2):
        if dist(i, j) == 1:
            for c in range(n):
                clauses.append([-x(i, c, -1), -x(j, c, 1)])
                clauses.append([-x(i, c, 1), -x(j, c, -1)])
            differ = []
            for c in range(n):
                for s in (-1, 0, 1):
                    d = fresh()
                    differ.append(d)
                    clauses.append([-d, x(i, c, s)])
                    clauses.append([-d, -x(j, c, s)])
            clauses.append(differ)
        else:
            witness = []
            for c in range(n):
                for s in (-1, 1):
                    w = fresh()
                    witness.append(w)
                    clauses.append([-w, x(i, c, s)])
                    clauses.append([-w, x(j, c, -s)])
            clauses.append(witness)
    head = "p cnf %d %d\n" % (top[0], len(clauses))
    return head + "".join(" ".join(map(str, c)) + " 0\n" for c in clauses)


def decide(text, timeout):
    """True (SAT), False (UNSAT) or None (no answer in time)."""
    try:
        r = subprocess.run(["cadical", "-q"], input=text, capture_output=True,
                           text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None
    return {10: True, 20: False}.get(r.returncode)


def main(argv):
    timeout = 120.0
    if "--timeout" in argv:
        k = argv.index("--timeout")
        timeout = float(argv[k + 1])
        del argv[k:k + 2]
    n, periods = int(argv[0]), [int(a) for a in argv[1:]]
    agree = mismatches = open_ = 0
    for h in periods:
        for values in itertools.product((1, 2), repeat=h // 2):
            base = dict(zip(range(1, h // 2 + 1), values))
            twin = decide(cnf(h, n, base, True), timeout)
            plain = decide(cnf(h, n - 1, base, False), timeout)
            if twin is None or plain is None:
                open_ += 1
                print("open: h=%d G=%s blow-up %s base %s" % (h, values, twin, plain))
            elif twin != plain:
                mismatches += 1
                print("MISMATCH: h=%d G=%s blow-up %s base %s" % (h, values, twin, plain))
            else:
                agree += 1
        print("n=%d h=%d done" % (n, h), flush=True)
    print("agree %d, mismatches %d, open %d" % (agree, mismatches, open_))
    return 1 if mismatches else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
