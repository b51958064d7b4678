#!/usr/bin/env python3
"""Deterministic synthetic sales data for the benchmark (tests/bench/run).

Usage: gen.py ROWS OUT.csv            the sales ledger
       gen.py --groups ROWS OUT.csv   the many-groups file

Sales ledger columns: day (YYYY-MM-DD), month (YYYY-MM), region (50
values), product (200 values), amount (number, two decimals), units (whole
number). Many-groups columns: customer (ROWS / 10 distinct keys, in random
order), amount (number, two decimals).
A 64-bit linear congruential generator (Knuth's MMIX constants) makes the
file identical on every machine and Python version.
"""
import sys

A = 6364136223846793005
C = 1442695040888963407
M = (1 << 64) - 1


def groups(rows, out):
    customers = max(rows // 10, 1)
    state = 7
    with open(out, "w", newline="") as f:
        f.write("customer,amount\n")
        batch = []
        for i in range(rows):
            state = (state * A + C) & M
            r = state >> 11
            # every key appears (the first pass over them), then at random
            key = i if i < customers else r % customers
            cents = (r >> 21) % 100000
            batch.append(f"c{key:07d},{cents // 100}.{cents % 100:02d}\n")
            if len(batch) == 100000:
                f.write("".join(batch))
                batch.clear()
        f.write("".join(batch))


def main():
    if sys.argv[1] == "--groups":
        groups(int(sys.argv[2]), sys.argv[3])
        return
    rows = int(sys.argv[1])
    out = sys.argv[2]
    regions = [f"region-{i:02d}" for i in range(1, 51)]
    products = [f"product-{i:03d}" for i in range(1, 201)]
    days = []
    for y in range(2021, 2025):
        for m in range(1, 13):
            for d in range(1, 29):
                days.append((f"{y}-{m:02d}-{d:02d}", f"{y}-{m:02d}"))
    state = 42
    with open(out, "w", newline="") as f:
        f.write("day,month,region,product,amount,units\n")
        batch = []
        for i in range(rows):
            state = (state * A + C) & M
            r = state >> 11
            day, month = days[(i * len(days)) // rows]
            region = regions[r % 50]
            product = products[(r >> 6) % 200]
            cents = (r >> 14) % 100000
            units = 1 + (r >> 31) % 20
            batch.append(f"{day},{month},{region},{product},{cents // 100}.{cents % 100:02d},{units}\n")
            if len(batch) == 100000:
                f.write("".join(batch))
                batch.clear()
        f.write("".join(batch))


if __name__ == "__main__":
    main()
