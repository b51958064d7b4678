#!/usr/bin/env python3
"""The many-groups story's view computed by polars with a lazy scan (the
comparison of tests/bench/run). Usage: polars_groups.py customers.csv"""
import sys

import polars as pl

scan = pl.scan_csv(sys.argv[1], schema={"customer": pl.Utf8, "amount": pl.Float64})
by = (
    scan.group_by("customer", maintain_order=True)
    .agg(pl.col("amount").sum())
    .sort("amount", descending=True, maintain_order=True)
    .collect()
)
top = by.head(10)
rest = by.tail(len(by) - 10)["amount"].sum()
print(len(by), "customers; top", list(top["customer"]), "; rest", round(rest, 2))
