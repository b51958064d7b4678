#!/usr/bin/env python3
"""A small sound Parquet file in zstd, polars' default codec, which
crescendo's reader is not built with (crates/data/tests/parquet_stream.rs
checks that the error names the codec). Needs polars; run from the repo root:
python3 tests/formats/make_zstd_fixture.py"""
import polars as pl

pl.DataFrame({"x": [1.0, 2.0, 3.0]}).write_parquet(
    "tests/formats/zstd.parquet", compression="zstd"
)
