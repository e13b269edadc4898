"""Exact Boys function values for the accuracy test of src/basis/boys.rs.

F_n(T) = int_0^1 t^(2n) exp(-T t^2) dt from the series
    F_n(T) = exp(-T) sum_k (2T)^k / ((2n+1)(2n+3)...(2n+2k+1))
(all terms positive, no cancellation) at the highest order, then the downward recursion
F_(n-1)(T) = (2T F_n(T) + exp(-T)) / (2n-1), both in 60-digit decimal arithmetic (Python's
standard `decimal` module, nothing else), so the stored values are exact to the last digit of
a double. Orders 0..24 (four shells of l = 6), arguments over the whole range: the table's
points and midpoints (the Taylor steps' worst case), both sides of the switch at T = 40,
and large T up to 1e4.

Writes boys.json: {"orders": 25, "points": [{"t": "...", "values": ["...", ...]}, ...]}, each
number a 20-digit decimal string.

Usage: python boys_reference.py OUTDIR
"""
import json, os, sys
from decimal import Decimal, getcontext

getcontext().prec = 60
ORDERS = 25


def boys_exact(t):
    t = Decimal(t)
    top = ORDERS - 1
    term = Decimal(1) / (2 * top + 1)
    total = term
    k = 0
    eps = Decimal(10) ** -58
    while True:
        k += 1
        term = term * 2 * t / (2 * top + 2 * k + 1)
        total += term
        if term < total * eps:
            break
    e = (-t).exp()
    values = [Decimal(0)] * ORDERS
    values[top] = e * total
    for n in range(top, 0, -1):
        values[n - 1] = (2 * t * values[n] + e) / (2 * n - 1)
    return values


def arguments():
    ts = ["0", "1e-12", "1e-6", "0.001", "0.024999", "0.025", "0.025001", "0.075"]
    # Table midpoints and points spread over (0, 40), irrational-looking offsets.
    k = 1
    while k * 1.3 < 40:
        ts.append(repr(round(k * 1.3 + 0.025, 6)))
        ts.append(repr(round(k * 1.3 + 0.0123456, 7)))
        k += 1
    ts += ["39.975", "39.99", "40", "40.000001", "40.025", "41.3", "44.44", "49.5", "57.1",
           "75", "100", "160.5", "333.3", "700", "1000", "2500", "1e4"]
    return ts


if __name__ == "__main__":
    out = sys.argv[1]
    points = []
    for t in arguments():
        values = boys_exact(t)
        points.append({"t": t, "values": [format(v, ".20e") for v in values]})
    with open(os.path.join(out, "boys.json"), "w") as fh:
        json.dump({"source": "tests/data/basis/boys_reference.py (60-digit decimal series)",
                   "orders": ORDERS, "points": points}, fh, separators=(",", ":"))
        fh.write("\n")
