#!/usr/bin/env python3
"""Writes tests/numbers/decimal_rounding.csv: the number policy's rounding
worked by Python's `decimal` module (ROUND_HALF_UP: half away from zero),
for tests/numbers.rs to compare with crescendo's figures.

Each value is read the way crescendo reads a double: its shortest
round-trip decimal form (Python's `repr`, the same digits as Rust's `{:e}`).
Rows: `value,kind,param,expected`, kinds:
- `fixed`: exactly `param` decimals (`{x to N decimals}`);
- `percent`: the value times 100 (the point moved, exact), `param`
  decimals (`{x as percent to N decimals}`);
- `sig`: at least `param` significant digits, never fewer than the whole
  digits, trailing zeros dropped (the default figure and every label).

Run: python3 tests/numbers/decimal_rounding.py  (deterministic: seed 17)
"""
import csv
import random
from decimal import Decimal, ROUND_HALF_UP
from pathlib import Path


def fixed(d: Decimal, places: int) -> Decimal:
    return d.quantize(Decimal(1).scaleb(-places), rounding=ROUND_HALF_UP)


def sig(d: Decimal, digits: int) -> Decimal:
    if d == 0:
        return Decimal(0)
    whole = d.adjusted() + 1  # digits before the point
    places = max(0, digits - whole)
    return fixed(d, places)


def plain(d: Decimal, places=None) -> str:
    """Digits without exponent; `places` fixed, or trailing zeros dropped."""
    if places is None:
        s = format(d, "f")
        if "." in s:
            s = s.rstrip("0").rstrip(".")
    else:
        s = format(d, f".{places}f")
    if s.startswith("-") and set(s[1:]) <= set("0."):
        s = s[1:]  # no "-0"
    return s


def ambiguous(v: float) -> bool:
    """Whether two shortest decimal forms read back to `v` (its exact binary
    value lies half-way between them, e.g. 685030399033.65625: Python writes
    ...6562, Rust ...6563). The rule rounds "the shortest digits", which is
    then not one string; such values are left out."""
    d = Decimal(repr(v))
    ulp = Decimal(1).scaleb(d.as_tuple().exponent)
    return abs(Decimal(v) - d) * 2 == ulp


def values(rng: random.Random):
    # The cases issue reports quoted (percent of 0.145 and 0.285, 1.005,
    # 2.25 and 2.675 to two decimals).
    yield from [0.145, 0.285, 1.005, 2.25, 2.675, -2.675, 0.001234, 999.95]
    # Typed values with few decimals: ties such as 2.675 or 0.145 are common.
    for _ in range(2000):
        k = rng.randint(0, 6)
        v = round(rng.uniform(-10_000, 10_000), k)
        yield v
    # Exact ties at every place: n + 0.5 * 10^-p.
    for _ in range(1000):
        p = rng.randint(0, 5)
        n = rng.randint(-100_000, 100_000)
        yield float(f"{n}5e-{p + 1}")
    # Doubles over many magnitudes.
    for _ in range(1000):
        yield rng.choice([-1, 1]) * 10 ** rng.uniform(-8, 13)


def main():
    rng = random.Random(17)
    out = Path(__file__).with_name("decimal_rounding.csv")
    rows = []
    for i, v in enumerate(values(rng)):
        if ambiguous(v):
            continue
        d = Decimal(repr(v))
        # the quoted cases at every number of places, the others at one
        for places in range(5) if i < 8 else [rng.randint(0, 4)]:
            rows.append((repr(v), "fixed", places, plain(fixed(d, places), places)))
            rows.append((repr(v), "percent", places, plain(fixed(d.scaleb(2), places), places)))
        rows.append((repr(v), "sig", 3, plain(sig(d, 3))))
    with out.open("w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["value", "kind", "param", "expected"])
        w.writerows(rows)


if __name__ == "__main__":
    main()
