#!/usr/bin/env python3
"""The Parquet ledger (ledger.parquet, from make_fixtures.py) written again
by another library in other codecs: zstd, polars' default, which crescendo
reads (tests/formats.rs checks the deck is the CSV's), and brotli, which it
does not (crates/data/tests/parquet_stream.rs checks the error names the
codec). Needs polars; run from the repo root:
python3 tests/formats/make_zstd_fixture.py"""
import polars as pl

ledger = pl.read_parquet("tests/formats/ledger.parquet")
ledger.write_parquet(
    "tests/formats/ledger-zstd.parquet", compression="zstd", row_group_size=50
)
ledger.write_parquet("tests/formats/brotli.parquet", compression="brotli")
