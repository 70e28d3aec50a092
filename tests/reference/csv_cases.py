#!/usr/bin/env python3
"""Reference parses of small CSV texts by Python's standard-library `csv` module.

Writes tests/reference/fixtures/csv_cases.json, read by src/table/reader_tests.rs. Each case
has the CSV text, the rows `csv.reader` returns (default dialect: comma, double quote,
doublequote=True, strict=False; rows that come back empty, i.e. blank lines, are dropped,
which is also the Rust reader's rule), the error the strict reader raises if any, and the source that
states the expected behaviour. Run from the repository root:

    python3 tests/reference/csv_cases.py

Only the standard library is used; the Python version is recorded in the fixture.
"""
import csv
import io
import json
import os
import sys

RFC = "RFC 4180 section 2"
CASES = [
    ("plain", "a,b,c\n1,2,3\n4,5,6\n", f"{RFC} rules 1 and 4"),
    ("crlf", "a,b\r\n1,2\r\n3,4\r\n", f"{RFC} rule 1 (CRLF line breaks)"),
    ("cr only", "a,b\r1,2\r3,4\r", "Python csv accepts a lone CR as a line end"),
    ("no final line break", "a,b\n1,2\n3,4", f"{RFC} rule 2"),
    ("quoted comma", 'name,x\n"Smith, J",1\n"Doe, A",2\n', f"{RFC} rule 6"),
    ("doubled quote", 'q,x\n"say ""hi""",1\n"""",2\n', f"{RFC} rule 7"),
    ("quoted line breaks", 'note,x\n"line one\nline two",1\n"cr\r\nlf",2\n', f"{RFC} rule 6"),
    ("quoted header", '"first name","x,y"\nAnn,1\n', f"{RFC} rules 3 and 5"),
    ("empty fields", "a,b,c\n,,\n1,,3\n", f"{RFC} rule 4 (a field may be empty)"),
    ("quoted empty", 'a,b\n"",1\n" ",2\n', f"{RFC} rule 5"),
    ("text after closing quote", 'a,b\n"x"y,1\n', "Python csv (non-strict) joins the text, as csv-core does"),
    ("quote inside unquoted field", 'a,b\n5"3,1\nab"c"d,2\n', "Python csv keeps a mid-field quote literally"),
    ("space before quote", 'a,b\n "x",1\n', "Python csv: a quote not first in the field is literal"),
    ("blank lines", "a,b\n\n1,2\n\n\n3,4\n\n", "Python csv returns blank lines as empty rows (dropped here)"),
    ("unicode", "ville,temp\nZürich,3.5\n東京,12\nSão Paulo,25\n", f"{RFC} (UTF-8 text per RFC 7111 / common practice)"),
    ("numbers", "x,y\n1,+2\n-3.5,1e3\n.5,5.\n", "Python csv returns the texts; values per Rust f64::from_str"),
    ("unclosed quote", 'a,b\n1,2\n"open,3\n4,5\n', "Python csv with strict=True raises 'unexpected end of data'"),
]


def parse(text):
    """Rows from the lenient reader; `ends_inside_quotes` when the strict reader reports that
    the data ends inside a quoted field (the one case the Rust reader refuses)."""
    rows = [r for r in csv.reader(io.StringIO(text, newline="")) if r]
    try:
        list(csv.reader(io.StringIO(text, newline=""), strict=True))
        strict_error = None
    except csv.Error as e:
        strict_error = str(e)
    return {"rows": rows, "strict_error": strict_error,
            "ends_inside_quotes": strict_error == "unexpected end of data"}


def main():
    out = {
        "generator": "tests/reference/csv_cases.py",
        "reference": f"Python {sys.version.split()[0]} csv module, default dialect",
        "cases": [dict(name=n, text=t, source=s, **parse(t)) for n, t, s in CASES],
    }
    here = os.path.dirname(os.path.abspath(__file__))
    path = os.path.join(here, "fixtures", "csv_cases.json")
    with open(path, "w", encoding="utf-8") as f:
        json.dump(out, f, ensure_ascii=False, indent=1)
        f.write("\n")
    print(f"wrote {len(CASES)} cases to {path}")


if __name__ == "__main__":
    main()
