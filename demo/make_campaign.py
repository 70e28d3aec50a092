#!/usr/bin/env python3
"""Splits the invented demo data into the files a field campaign comes as: one CSV per
station (the measurements) and one model file on a coarser, 3-hourly time grid.

What it is for: the page's many-files path and its time alignment, tested in a browser and
timed on data whose answer is known (the model file holds the demo's invented forecast
columns, so measurement minus model is the demo's forecast error). What it is not: real
data, nor a generator of new numbers: it only rearranges demo/river-sensors.csv.

Python 3 standard library only; the same input always gives the same bytes.

    python3 demo/make_campaign.py --out /tmp/campaign

Writes, in --out:
  station-<name>.csv   time, station and the measured columns of one station (hourly);
                       the station at the estuary has no pH sensor (its file lacks `ph`)
  model-3h.csv         time, station, water_temp_c, dissolved_oxygen_mg_l, stage_m: the
                       forecast columns at 00:00, 03:00, ... under the measured names
"""

import argparse
import csv
import os

HERE = os.path.dirname(os.path.abspath(__file__))
MEASURED = ["time", "station", "sky", "water_temp_c", "air_temp_c", "conductivity_us_cm", "turbidity_ntu",
            "dissolved_oxygen_mg_l", "ph", "stage_m", "discharge_m3_s", "rain_mm"]
MODEL = {"water_temp_c": "forecast_temp_c", "dissolved_oxygen_mg_l": "forecast_oxygen_mg_l", "stage_m": "forecast_stage_m"}
NO_PH = "marsh-gate"


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--source", default=os.path.join(HERE, "river-sensors.csv"))
    p.add_argument("--out", required=True, help="folder to write the files into")
    p.add_argument("--step-hours", type=int, default=3, help="model time step (hours)")
    args = p.parse_args()
    os.makedirs(args.out, exist_ok=True)
    with open(args.source, newline="") as f:
        rows = list(csv.DictReader(f))
    stations = []
    for r in rows:
        if r["station"] not in stations:
            stations.append(r["station"])
    for s in stations:
        cols = [c for c in MEASURED if not (s == NO_PH and c == "ph")]
        with open(os.path.join(args.out, f"station-{s}.csv"), "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(cols)
            for r in rows:
                if r["station"] == s:
                    w.writerow([r[c] for c in cols])
    with open(os.path.join(args.out, f"model-{args.step_hours}h.csv"), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["time", "station"] + list(MODEL))
        for r in rows:
            hour = int(r["time"][11:13])
            if hour % args.step_hours == 0:
                w.writerow([r["time"], r["station"]] + [r[MODEL[c]] for c in MODEL])
    print(f"{len(stations)} station files and model-{args.step_hours}h.csv in {args.out}")


if __name__ == "__main__":
    main()
