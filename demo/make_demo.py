#!/usr/bin/env python3
"""Writes the invented demo data set: hourly readings from a network of river sensors.

What it is for: one CSV, small enough to be inlined into the page, whose shapes are
known because they were put there on purpose (a daily loop, storm flares, a stretch of
biased forecasts, field-style gaps). What it is not: real measurements of any river.
Everything here is made up, from the station names to the storm dates.

Python 3 standard library only, seeded, deterministic: the same arguments always give
the same bytes.

    python3 demo/make_demo.py                     # demo/river-sensors.csv, 7,056 rows
    python3 demo/make_demo.py --rows 1500000 --out /tmp/big.csv   # about 150 MB, streamed

See demo/README.md for the columns and the shapes built in.
"""

import argparse
import datetime as dt
import math
import os
import random
import sys

SEED = 20240715
DEFAULT_ROWS = 7056  # 6 stations x 24 hours x 49 days
START = dt.datetime(2024, 7, 15, 0, 0)

# Invented stations, upstream to downstream. Each tuple:
# (name, temperature offset C, diurnal amplitude C, conductivity uS/cm, base stage m,
#  base turbidity NTU, base discharge m3/s, storm lag h, recession per hour, pH offset)
STATIONS = [
    ("heron-spring", -0.3, 2.9, 185.0, 0.34, 2.0, 0.8, 1, 0.920, -0.15),
    ("flint-mill", -0.2, 3.0, 240.0, 0.47, 2.8, 1.6, 2, 0.930, -0.08),
    ("alder-bend", -0.1, 3.0, 305.0, 0.61, 3.6, 3.0, 3, 0.940, 0.00),
    ("quarry-reach", 0.1, 3.1, 385.0, 0.78, 5.0, 5.0, 4, 0.950, 0.05),
    ("town-weir", 0.2, 3.1, 470.0, 0.94, 7.0, 8.0, 5, 0.955, 0.10),
    ("marsh-gate", 0.3, 3.2, 560.0, 1.09, 9.5, 12.0, 6, 0.960, 0.14),
]

COLUMNS = [
    "time", "station", "sky",
    "water_temp_c", "forecast_temp_c", "air_temp_c",
    "conductivity_us_cm", "turbidity_ntu",
    "dissolved_oxygen_mg_l", "forecast_oxygen_mg_l", "ph",
    "stage_m", "forecast_stage_m", "discharge_m3_s", "rain_mm",
]

# Storms arrive on average every STORM_EVERY_H hours (exponential gaps).
STORM_EVERY_H = 9 * 24
# Every BLOCK_DAYS days the forecast model runs biased from day BIAS_FROM to BIAS_TO
# of the block (warm, oxygen-low, and it misses storm peaks).
BLOCK_DAYS, BIAS_FROM, BIAS_TO = 49, 27, 37


def oxygen_saturation(t):
    """Dissolved oxygen at saturation in fresh water, mg/L, for temperature t in C.
    A cubic fit of the usual tables (from memory; good to about 0.1 mg/L at 0-30 C)."""
    return 14.62 - 0.3898 * t + 0.006969 * t * t - 0.00005897 * t * t * t


class Weather:
    """Rain and cloud shared by all stations, generated hour by hour."""

    def __init__(self, rng):
        self.rng = rng
        self.next_storm = int(rng.expovariate(1.0 / STORM_EVERY_H)) + 30
        self.storm_left = 0
        self.storm_len = 0
        self.storm_peak = 0.0
        self.cloudy = False
        self.drizzle = 0

    def step(self, hour_index, hour_of_day):
        rng = self.rng
        if hour_of_day == 0:
            # Cloud is a two-state chain from one day to the next.
            self.cloudy = rng.random() < (0.6 if self.cloudy else 0.3)
        rain = 0.0
        if hour_index == self.next_storm:
            self.storm_len = rng.randint(5, 14)
            self.storm_left = self.storm_len
            self.storm_peak = rng.uniform(6.0, 18.0)
            self.next_storm = hour_index + self.storm_len + 24 + int(rng.expovariate(1.0 / STORM_EVERY_H))
        if self.storm_left > 0:
            # A triangular burst with ragged edges.
            k = self.storm_len - self.storm_left
            shape = 1.0 - abs(2.0 * (k + 0.5) / self.storm_len - 1.0)
            rain = self.storm_peak * shape * rng.uniform(0.6, 1.3)
            self.storm_left -= 1
            self.cloudy = True
        elif self.cloudy and self.drizzle == 0 and rng.random() < 0.02:
            self.drizzle = rng.randint(1, 4)
        if self.drizzle > 0 and self.storm_left == 0:
            rain += rng.uniform(0.1, 0.9)
            self.drizzle -= 1
        return rain


class Station:
    """One sensor site: slow states carried from hour to hour."""

    def __init__(self, spec, rng):
        (self.name, self.t_off, self.amp, self.cond, self.stage0, self.turb0,
         self.q0, self.lag, self.recession, self.ph_off) = spec
        self.rng = rng
        self.temp_noise = 0.0      # AR(1) residual of water temperature
        self.stage_noise = 0.0     # slow wander of base stage
        self.excess = 0.0          # storm stage excess, m
        self.model_excess = 0.0    # the forecast model's idea of it
        self.rain_queue = [0.0] * (self.lag + 1)
        self.outage = 0            # hours left of a full sensor outage
        self.fouled = 0            # hours left of a fouled turbidity probe
        self.logger_fill = 0       # hours left of conductivity logger writing -9999
        self.z0 = 0.55 * self.stage0
        self.rating = self.q0 / (self.stage0 - self.z0) ** 1.6


def fmt(x, digits):
    return f"{x:.{digits}f}"


def generate(rows, out):
    rng = random.Random(SEED)
    weather = Weather(rng)
    stations = [Station(spec, rng) for spec in STATIONS]
    n_st = len(stations)
    hours = (rows + n_st - 1) // n_st
    written = 0
    buf = [",".join(COLUMNS) + "\n"]
    two_pi = 2.0 * math.pi
    for h in range(hours):
        when = START + dt.timedelta(hours=h)
        hod = when.hour
        doy = when.timetuple().tm_yday
        day_in_block = (h // 24) % BLOCK_DAYS
        biased = BIAS_FROM <= day_in_block < BIAS_TO
        rain_here = weather.step(h, hod)
        sky = "rain" if rain_here >= 0.2 else ("cloudy" if weather.cloudy else "clear")
        # Annual cycle peaking in early August; the default span sits near its top, so
        # the daily loop is not smeared by a seasonal trend.
        seasonal = 11.5 + 6.5 * math.cos(two_pi * (doy - 215) / 365.25)
        sun = 0.8 if weather.cloudy else 1.0
        phase_t = two_pi * (hod - 11) / 24.0   # water temperature peaks near 17:00
        phase_o = two_pi * (hod - 8) / 24.0    # photosynthesis peaks near 14:00
        forecast_missing = rng.random() < 0.004  # the model run did not arrive this hour
        stamp = when.strftime("%Y-%m-%dT%H:%M")
        for st in stations:
            if written >= rows:
                break
            # Rain at this station, then routed to the gauge with a lag.
            rain = rain_here * rng.uniform(0.7, 1.3) if rain_here > 0 else 0.0
            st.rain_queue.append(rain)
            routed = st.rain_queue.pop(0)
            st.excess = st.excess * st.recession + 0.018 * routed
            st.model_excess = st.model_excess * st.recession + 0.018 * routed * rng.uniform(0.8, 1.2)
            x = st.excess
            dilution = x / (x + 0.35)

            # Water temperature: seasonal + daily wave + AR(1) noise; storms cool it.
            st.temp_noise = 0.85 * st.temp_noise + rng.gauss(0.0, 0.12)
            temp_model = seasonal + st.t_off + st.amp * sun * math.sin(phase_t) - 0.6 * dilution
            water = temp_model + st.temp_noise
            air = seasonal + 1.5 + 5.0 * sun * math.sin(two_pi * (hod - 9) / 24.0) + rng.gauss(0.0, 0.8)

            # Oxygen: near saturation, plus the daily swing of photosynthesis (which
            # leads temperature by three hours, so the two trace a loop), plus
            # reaeration in storms.
            photo = 1.5 * sun * math.sin(phase_o) * (1.0 - 0.3 * dilution)
            oxy_model = 0.93 * oxygen_saturation(temp_model) + photo + 0.2 * dilution
            oxy = 0.93 * oxygen_saturation(water) + photo + 0.2 * dilution + rng.gauss(0.0, 0.12)

            ph = 7.55 + st.ph_off + 0.18 * photo - 0.35 * dilution + rng.gauss(0.0, 0.03)
            cond = st.cond * (1.0 - 0.6 * dilution) * (1.0 + rng.gauss(0.0, 0.015))
            turb = st.turb0 * math.exp(rng.gauss(0.0, 0.18)) + 420.0 * x ** 1.4 * rng.uniform(0.8, 1.2)

            st.stage_noise = 0.995 * st.stage_noise + rng.gauss(0.0, 0.002)
            stage = st.stage0 + st.stage_noise + x + rng.gauss(0.0, 0.004)
            q = st.rating * max(stage - st.z0, 0.0) ** 1.6

            f_temp = temp_model + rng.gauss(0.0, 0.3)
            f_oxy = oxy_model + rng.gauss(0.0, 0.15)
            f_stage = st.stage0 + st.model_excess + rng.gauss(0.0, 0.01)
            if biased:
                f_temp += 1.6
                f_oxy -= 0.6
                f_stage = st.stage0 + 0.55 * st.model_excess + 0.04 + rng.gauss(0.0, 0.01)

            cells = [
                fmt(water, 2), fmt(f_temp, 2), fmt(air, 1),
                fmt(cond, 1), fmt(turb, 1),
                fmt(oxy, 2), fmt(f_oxy, 2), fmt(ph, 2),
                fmt(stage, 3), fmt(f_stage, 3), fmt(q, 2), fmt(rain, 1),
            ]

            # Field-data faults. Index into `cells`: 0 water .. 11 rain.
            if st.outage == 0 and rng.random() < 0.0004:
                st.outage = rng.randint(6, 30)
            if st.fouled == 0 and rng.random() < 0.0015:
                st.fouled = rng.randint(4, 36)
            if st.logger_fill == 0 and rng.random() < 0.0012:
                st.logger_fill = rng.randint(1, 8)
            if st.fouled > 0:
                cells[4] = "NA"
                st.fouled -= 1
            if st.logger_fill > 0:
                cells[3] = "-9999"
                st.logger_fill -= 1
            if forecast_missing:
                cells[1] = cells[6] = cells[9] = "NA"
            for i in (0, 2, 5, 7, 8, 10, 11):
                if rng.random() < 0.003:
                    cells[i] = ""
            if st.outage > 0:
                for i in (0, 3, 4, 5, 7, 8, 10):
                    cells[i] = ""
                st.outage -= 1

            buf.append(f"{stamp},{st.name},{sky}," + ",".join(cells) + "\n")
            written += 1
        if len(buf) >= 20000:
            out.write("".join(buf))
            buf.clear()
    out.write("".join(buf))
    return written


def main(argv):
    here = os.path.dirname(os.path.abspath(__file__))
    p = argparse.ArgumentParser(description="Write the invented river-sensor demo CSV.")
    p.add_argument("--rows", type=int, default=DEFAULT_ROWS,
                   help=f"number of data rows (default {DEFAULT_ROWS}; up to a few million)")
    p.add_argument("--out", default=os.path.join(here, "river-sensors.csv"),
                   help="output path (default demo/river-sensors.csv)")
    a = p.parse_args(argv)
    if a.rows < 1:
        p.error("--rows must be at least 1")
    # newline="" keeps "\n" line ends on every platform, so the bytes are the same everywhere.
    with open(a.out, "w", encoding="utf-8", newline="") as f:
        n = generate(a.rows, f)
    print(f"wrote {n} rows to {a.out}", file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv[1:])
