"""Write the Polyadic demo data: an invented research greenhouse, one row per 10 minutes.

Everything here is made up (DESIGN.md §6). Two structures are planted on purpose:

* Redundancy: ``humidity_a_pct`` and ``humidity_b_pct`` are two sensors in the same air. They
  read one latent humidity plus small independent sensor noise, so they share nearly all of
  their information.
* Synergy: during the logging period the irrigation line was under a commissioning test. A test
  rig, independent of the controller, forced the line into the opposite state in about half of
  the 10-minute slots (a bypass opened while the valve was closed: a simulated leak; a shutoff
  closed while the valve was open: a simulated blockage). So the flow meter alone says nothing
  about the valve command, and ``leak_alarm`` (which fires when command and flow disagree, with a
  few false and missed alarms) says nothing about either alone. Only the three together are
  informative: an exclusive-or, the textbook example of a negative co-information (Bell 2003).

Numeric columns are continuous (no long runs of tied values), so quantile bins are well defined;
the flow meter is bimodal (about 0 or about 12 L/min, each with meter noise), so quartile bins
split it into two "no flow" and two "flow" bins. The valve command, leak alarm and fan state are
booleans, which are binned as categories.

Run ``python demo/generate.py`` (``--help`` for options). Writes a CSV and a Parquet file.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

#: Seed of the published demo data; the demo notebook and the tests use it.
DEFAULT_SEED = 20310301
#: 6000 rows of 10 minutes: about 41.7 days.
DEFAULT_ROWS = 6000
DEFAULT_OUT = Path(__file__).resolve().parent / "data" / "greenhouse.csv"
#: First timestamp of the invented logging period (local greenhouse time, no time zone).
START = "2031-03-01 00:00"
STEP_MINUTES = 10

#: Column order of the written files.
COLUMNS = [
    "timestamp",
    "air_temp_c",
    "humidity_a_pct",
    "humidity_b_pct",
    "leaf_wetness_pct",
    "light_lux",
    "co2_ppm",
    "soil_moisture_bed1_pct",
    "soil_moisture_bed2_pct",
    "soil_moisture_bed3_pct",
    "valve_command",
    "flow_l_min",
    "leak_alarm",
    "fan_on",
    "spare_channel_v",
    "logger_jitter_ms",
    "visitor_zone",
]


def _ar1(rng: np.random.Generator, n: int, phi: float, sigma: float) -> np.ndarray:
    """A stationary AR(1) series with lag-one correlation ``phi`` and marginal s.d. ``sigma``."""
    innovations = rng.normal(0.0, sigma * np.sqrt(1.0 - phi * phi), n)
    out = np.empty(n)
    out[0] = rng.normal(0.0, sigma)
    for i in range(1, n):
        out[i] = phi * out[i - 1] + innovations[i]
    return out


def _sigmoid(x: np.ndarray) -> np.ndarray:
    return 1.0 / (1.0 + np.exp(-x))


def generate(rows: int = DEFAULT_ROWS, seed: int = DEFAULT_SEED) -> pd.DataFrame:
    """Build the greenhouse log as a DataFrame. Same ``rows`` and ``seed`` give the same frame."""
    if rows < 1:
        raise ValueError(f"--rows must be at least 1, got {rows}")
    rng = np.random.default_rng(seed)
    n = rows

    timestamp = pd.date_range(START, periods=n, freq=f"{STEP_MINUTES}min")
    hour = (np.arange(n) * STEP_MINUTES / 60.0) % 24.0
    day = (np.arange(n) * STEP_MINUTES) // (24 * 60)
    days = int(day[-1]) + 1

    # Light: a daylight arch scaled by the day's cloudiness and by passing clouds; at night
    # the sensor's dark reading wanders a few lux.
    daylight = np.clip(np.sin(np.pi * (hour - 6.0) / 14.0), 0.0, None)
    daylight[(hour < 6.0) | (hour > 20.0)] = 0.0
    day_clearness = rng.uniform(0.45, 1.0, days)[day]
    passing_clouds = np.clip(1.0 + _ar1(rng, n, 0.8, 0.18), 0.3, 1.3)
    light_lux = 55_000.0 * daylight * day_clearness * passing_clouds + np.abs(rng.normal(0, 4, n))

    # Air temperature: a daily cycle peaking mid-afternoon, warmed by sunlight, plus weather.
    air_temp_c = (
        19.0
        + 4.0 * np.sin(2 * np.pi * (hour - 9.0) / 24.0)
        + light_lux / 20_000.0
        + _ar1(rng, n, 0.97, 1.3)
    )

    # One latent humidity of the air: lower when warm, plus slow weather.
    humidity = np.clip(72.0 - 2.2 * (air_temp_c - 20.0) + _ar1(rng, n, 0.95, 6.0), 25.0, 99.0)
    humidity_a_pct = humidity + rng.normal(0.0, 0.4, n)
    humidity_b_pct = humidity + rng.normal(0.0, 0.4, n)

    # Leaf wetness rises steeply once the air is near saturation; dew forms unevenly, so the
    # leaf's own variation enters before the sensor's saturating response.
    leaf_wetness_pct = 100.0 * _sigmoid((humidity - 80.0) / 4.0 + rng.normal(0.0, 1.0, n))

    # Fan: the climate controller ventilates when warm or very humid; a few manual overrides.
    fan_on = (air_temp_c > 23.5) | (humidity > 90.0)
    fan_on ^= rng.random(n) < 0.03

    # CO2: drawn down by photosynthesis in light, flushed by the fan.
    co2_ppm = 640.0 - light_lux / 300.0 - 90.0 * fan_on + rng.normal(0.0, 35.0, n)

    # Valve command: the drip controller opens the line in 10-minute pulses, more often by day.
    pulse_probability = np.where((hour >= 6.0) & (hour < 20.0), 0.6, 0.38)
    valve_command = rng.random(n) < pulse_probability

    # Commissioning test: the rig flips the line's state in about half of the slots, at
    # random and independently of the command (see the module docstring).
    rig_override = rng.random(n) < 0.5
    water_flowing = valve_command ^ rig_override
    flow_l_min = np.where(
        water_flowing,
        rng.normal(12.0, 0.9, n),
        np.abs(rng.normal(0.0, 0.25, n)),
    )
    # Leak alarm: fires when command and flow disagree; 3 % false or missed alarms.
    leak_alarm = (valve_command != water_flowing) ^ (rng.random(n) < 0.03)

    # Soil moisture: beds 1 and 2 sit on the drip line, bed 3 is watered by hand. Each bed
    # relaxes to its own level, dries a little faster when warm, and wanders slowly.
    soil = {}
    for bed, (level, gain) in enumerate([(34.0, 0.35), (29.0, 0.25), (38.0, 0.0)], start=1):
        drift = _ar1(rng, n, 0.995, 3.0)
        watering = gain * (water_flowing - 0.5)
        drying = 0.02 * (air_temp_c - 20.0)
        moisture = np.empty(n)
        moisture[0] = level
        for i in range(1, n):
            moisture[i] = moisture[i - 1] + 0.05 * (level - moisture[i - 1]) + watering[i] - drying[i]
        soil[bed] = moisture + drift + rng.normal(0.0, 0.3, n)

    # Pure noise: an unconnected analog input, the logger's timing jitter and a visitor log.
    spare_channel_v = rng.normal(0.0, 0.05, n)
    logger_jitter_ms = rng.gamma(2.0, 15.0, n)
    visitor_zone = rng.choice(np.array(["north", "south", "east", "west"]), n)

    frame = pd.DataFrame(
        {
            "timestamp": timestamp,
            "air_temp_c": np.round(air_temp_c, 3),
            "humidity_a_pct": np.round(humidity_a_pct, 3),
            "humidity_b_pct": np.round(humidity_b_pct, 3),
            "leaf_wetness_pct": np.round(leaf_wetness_pct, 4),
            "light_lux": np.round(light_lux, 2),
            "co2_ppm": np.round(co2_ppm, 2),
            "soil_moisture_bed1_pct": np.round(soil[1], 3),
            "soil_moisture_bed2_pct": np.round(soil[2], 3),
            "soil_moisture_bed3_pct": np.round(soil[3], 3),
            "valve_command": valve_command,
            "flow_l_min": np.round(flow_l_min, 4),
            "leak_alarm": leak_alarm,
            "fan_on": fan_on,
            "spare_channel_v": np.round(spare_channel_v, 5),
            "logger_jitter_ms": np.round(logger_jitter_ms, 3),
            "visitor_zone": visitor_zone,
        },
        columns=COLUMNS,
    )
    return frame


def write(frame: pd.DataFrame, out: Path) -> tuple[Path, Path]:
    """Write ``frame`` as CSV at ``out`` and as Parquet beside it; return both paths."""
    out = Path(out)
    out.parent.mkdir(parents=True, exist_ok=True)
    csv_path = out.with_suffix(".csv")
    parquet_path = out.with_suffix(".parquet")
    frame.to_csv(csv_path, index=False, date_format="%Y-%m-%dT%H:%M:%S", lineterminator="\n")
    frame.to_parquet(parquet_path, engine="pyarrow", index=False)
    return csv_path, parquet_path


def main(argv: list[str] | None = None) -> int:
    """Command line: generate and write the demo data."""
    parser = argparse.ArgumentParser(description="Write the invented greenhouse demo data.")
    parser.add_argument("--rows", type=int, default=DEFAULT_ROWS, help="rows to write (default %(default)s)")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, help="random seed (default %(default)s)")
    parser.add_argument(
        "--out",
        type=Path,
        default=DEFAULT_OUT,
        help="CSV path; the Parquet file goes beside it (default demo/data/greenhouse.csv)",
    )
    args = parser.parse_args(argv)
    if args.rows < 1:
        parser.error(f"--rows must be at least 1, got {args.rows}")
    csv_path, parquet_path = write(generate(args.rows, args.seed), args.out)
    print(f"wrote {csv_path} and {parquet_path}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
