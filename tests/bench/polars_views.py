#!/usr/bin/env python3
"""The benchmark story's four views computed by polars with a lazy scan
(the comparison of tests/bench/run). Usage: polars_views.py sales.csv, or
polars_views.py sales.parquet (the same rows written by convert.py)"""
import sys

import polars as pl

path = sys.argv[1]
scan = pl.scan_parquet(path) if path.endswith(".parquet") else pl.scan_csv(
    path,
    schema={
        "day": pl.Date,
        "month": pl.Utf8,
        "region": pl.Utf8,
        "product": pl.Utf8,
        "amount": pl.Float64,
        "units": pl.Float64,
    },
)
five = ["region-01", "region-02", "region-03", "region-04", "region-05"]
monthly = (
    scan.filter(pl.col("region").is_in(five))
    .group_by(["month", "region"], maintain_order=True)
    .agg(pl.col("amount").sum())
)
products = scan.group_by("product", maintain_order=True).agg(pl.col("amount").sum())
large = (
    scan.filter((pl.col("region") == "region-07") & (pl.col("amount") > 900))
    .group_by("month", maintain_order=True)
    .agg(pl.len().alias("orders"))
)
units = scan.group_by("region", maintain_order=True).agg(pl.col("units").mean())
m, p, l, u = pl.collect_all([monthly, products, large, units])
# the small steps after the groups (sort, top N with the rest folded)
p = p.sort("amount", descending=True, maintain_order=True)
top = p.head(6)
rest = p.tail(len(p) - 6)["amount"].sum()
u = u.sort("units", descending=True, maintain_order=True)
print(len(m), "monthly rows;", len(top) + 1, "product bars (rest", round(rest, 2), ");",
      len(l), "months of large orders;", min(len(u), 6), "region bars")
