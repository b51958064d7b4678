#!/usr/bin/env python3
"""Write the invented demo data of the stories in stories/.

Every name and number here is made up for the demos; the scenarios are our
own. The output is deterministic (fixed seed), so running this again gives
byte-identical CSV files.

    python3 tests/scripts/make_demo_data.py
"""
import csv
import math
import os
import random

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def pools():
    """Monthly swim visits at four county pools, 2021-01 .. 2024-12.

    Westbrook starts evening swims in 2023-04 and pulls away; Alder Park was
    closed for repairs in 2022-02 (a missing month, not a zero).
    """
    rng = random.Random(20261201)
    base = {"Alder Park": 5200, "Westbrook": 4700, "Millrace": 3900, "Harrow Lane": 3300}
    rows = []
    for year in range(2021, 2025):
        for month in range(1, 13):
            t = (year - 2021) * 12 + (month - 1)
            season = 1 + 0.28 * math.sin((month - 4) / 12 * 2 * math.pi)
            for pool, b in base.items():
                growth = 1 + 0.004 * t
                if pool == "Westbrook" and (year, month) >= (2023, 4):
                    months_in = (year - 2023) * 12 + month - 4
                    growth *= 1 + 0.055 * min(months_in, 14) + 0.01 * max(months_in - 14, 0)
                visits = round(b * season * growth * rng.uniform(0.96, 1.04))
                cell = "" if (pool == "Alder Park" and (year, month) == (2022, 2)) else str(visits)
                rows.append([f"{year}-{month:02d}", pool, cell, "public" if pool != "Millrace" else "school"])
    path = os.path.join(ROOT, "stories", "pools", "data", "visits.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["month", "pool", "visits", "operator"])
        w.writerows(rows)


def volunteers():
    """Volunteer hours per task at an invented food bank, by quarter of 2024."""
    rng = random.Random(7)
    tasks = {
        "Sorting donated produce": 1450,
        "Delivering to homebound clients": 1980,
        "Front desk and intake": 900,
        "Warehouse inventory": 760,
        "Cooking community meals": 1210,
        "Driver dispatch": 330,
        "Fundraising events": 280,
        "Youth garden": 190,
        "Translation help": 150,
    }
    rows = []
    for q in range(1, 5):
        for task, hours in tasks.items():
            h = hours / 4 * rng.uniform(0.85, 1.15)
            if task == "Delivering to homebound clients":
                h *= 0.8 + 0.15 * q
            rows.append([f"2024-Q{q}", task, f"{h:.1f}"])
    path = os.path.join(ROOT, "stories", "volunteers", "data", "hours.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["quarter", "task", "hours"])
        w.writerows(rows)


if __name__ == "__main__":
    pools()
    volunteers()
