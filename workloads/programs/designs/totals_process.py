"""Grams per grower as a whole program: python3 totals_process.py INPUT.parquet OUTPUT.parquet"""
import sys

import polars as pl

df = pl.read_parquet(sys.argv[1])
df.group_by("grower").agg(pl.col("grams").sum()).write_parquet(sys.argv[2])
