#!/usr/bin/env python3
"""The benchmark ledger in the other formats crescendo reads (tests/bench/run):
all of it as Parquet, its first 100,000 rows as a workbook.
Usage: convert.py sales.csv OUT.parquet OUT.xlsx (needs polars, xlsxwriter)"""
import sys

import polars as pl

schema = {
    "day": pl.Date,
    "month": pl.Utf8,
    "region": pl.Utf8,
    "product": pl.Utf8,
    "amount": pl.Float64,
    "units": pl.Float64,
}
src, parquet, workbook = sys.argv[1:4]
# Snappy, as the earlier figures were measured (crescendo also reads
# polars' default, zstd)
pl.scan_csv(src, schema=schema).sink_parquet(parquet, compression="snappy")
pl.scan_csv(src, schema=schema).head(100_000).collect().write_excel(workbook, autofit=False)
