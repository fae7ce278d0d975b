"""Grams per grower with a polars expression."""
import polars as pl


def describe():
    return f"polars {pl.__version__}"


def load(path):
    return pl.read_parquet(path)


def run(df):
    return df.group_by("grower").agg(pl.col("grams").sum())


def save(result, path):
    result.write_parquet(path)
