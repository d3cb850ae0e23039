"""Speed of `hunchbook data import`: 20 markets x 40 quarterly contracts (10 years) of
per-contract CSV files named like M01H2015.csv (each contract listed for a year before its
expiry, about 260 rows a file, 800 files), then ``data check`` on the folder written.

Prints (not a test; shared machines are noisy) min / median / max seconds over several runs
of the import (target: under 5 s) and of the data check. Inputs are generated here (benchmark
data only). Run: .venv/bin/python benchmarks/data_import.py [--runs N]
"""

from __future__ import annotations

import argparse
import platform
import shutil
from pathlib import Path
from tempfile import TemporaryDirectory

import numpy as np
import pandas as pd
from timing import line, repeat_times

from hunchbook.core.data_check import check_data_folder
from hunchbook.core.data_import import ImportSettings, expiry_from_rule, import_data

MARKETS = 20
YEARS = range(2015, 2025)  # 10 years, four contracts (H M U Z) each: 40 contracts
LIBRARY_ENTRY = """[{m}]
multiplier = 50
tick_size = 0.25
currency = "USD"
commission = 1
exchange_fee = 1
regulatory_fee = 0
slippage_ticks = 1
"""


def write_sources(folder: Path) -> None:
    """800 per-contract files with a desk's column names (benchmark data only)."""
    rng = np.random.default_rng(7)
    days = pd.bdate_range("2014-03-01", "2024-12-31")
    for k in range(MARKETS):
        market = f"M{k:02d}"
        level = 100 + np.cumsum(rng.normal(0, 1, len(days)))
        for year in YEARS:
            for code, month in (("H", 3), ("M", 6), ("U", 9), ("Z", 12)):
                expiry = pd.Timestamp(expiry_from_rule("third-friday", year, month))
                listed = (days > expiry - pd.DateOffset(years=1)) & (days <= expiry)
                close = level[listed] + rng.normal(0, 0.5)
                pd.DataFrame({"Trade Date": days[listed].strftime("%Y-%m-%d"),
                              "Open": close - 0.25, "High": close + 1, "Low": close - 1,
                              "Settle": close.round(2),
                              "Volume": rng.integers(100, 5000, listed.sum())}).to_csv(
                    folder / f"{market}{code}{year}.csv", index=False)



def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="runs of each figure (default 5)")
    args = parser.parse_args()
    with TemporaryDirectory() as tmp:
        root = Path(tmp)
        (root / "src").mkdir()
        write_sources(root / "src")
        library = root / "library.toml"
        library.write_text("\n".join(LIBRARY_ENTRY.format(m=f"M{k:02d}") for k in range(MARKETS)))
        settings = ImportSettings(sources=(str(root / "src"),), expiry={"*": "third-friday"},
                                  library=str(library))
        size = sum(p.stat().st_size for p in (root / "src").iterdir()) / 2**20
        print(f"{MARKETS} markets x {4 * len(YEARS)} contracts, "
              f"{len(list((root / 'src').iterdir()))} files, {size:.0f} MB of CSV; "
              f"{platform.python_implementation()} {platform.python_version()}, pandas "
              f"{pd.__version__}")

        def once() -> None:
            shutil.rmtree(root / "data", ignore_errors=True)
            import_data(settings, root / "data")

        imports = repeat_times(once, args.runs)
        rows = sum(len(pd.read_csv(p)) for p in (root / "data").glob("*.csv"))
        print(f"written: {rows:,} rows in {MARKETS} market files")
        print(line("import (target < 5 s)", imports))
        checks = repeat_times(lambda: check_data_folder(root / "data"), args.runs)
        print(line("data check", checks))


if __name__ == "__main__":
    main()
