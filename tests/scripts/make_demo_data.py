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


def clinics():
    """Monthly follow-up appointments by channel at three invented clinics.

    Two exports of the same data: `followups-2024-11.csv` (through November)
    and `followups-2024-12.csv` (one more month, and revised figures after a
    booking-system fix moved many "video" bookings to "phone"). The story's
    claim that video is over a third of follow-ups holds on the first and
    fails on the second.
    """
    rng = random.Random(42)
    clinics = {"Northgate": 1.0, "Riverside": 0.8, "Hillcrest": 0.6}
    def rows(last_month, revised):
        out = []
        for year in (2023, 2024):
            for month in range(1, 13):
                if (year, month) > last_month:
                    break
                t = (year - 2023) * 12 + (month - 1)
                for clinic, size in clinics.items():
                    total = 900 * size * (1 + 0.01 * t) * rng.uniform(0.97, 1.03)
                    video_share = (0.22 + 0.006 * t) * rng.uniform(0.95, 1.05)
                    if revised:
                        video_share *= 0.7
                    phone_share = 0.18
                    video = round(total * video_share)
                    phone = round(total * phone_share) + (round(total * 0.3 * video_share / 0.7) if revised else 0)
                    in_person = round(total) - video - phone
                    for channel, n in (("In person", in_person), ("Video", video), ("Phone", phone)):
                        out.append([f"{year}-{month:02d}", clinic, channel, str(n)])
        return out
    for name, last, revised in (("followups-2024-11.csv", (2024, 11), False), ("followups-2024-12.csv", (2024, 12), True)):
        rng.seed(42)
        path = os.path.join(ROOT, "stories", "clinics", "data", name)
        with open(path, "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(["month", "clinic", "channel", "appointments"])
            w.writerows(rows(last, revised))


def libraries():
    """Monthly loans by branch and format at an invented city library
    service, 2023-01 .. 2024-12, and one row of facts per branch.

    E-book loans grow steadily; Central closed for renovation in 2023-02 and
    2023-03 (missing months, not zeros); a summer reading challenge lifts
    July loans.
    """
    rng = random.Random(1789)
    branches = {"Central": 1.0, "Quarry Street": 0.55, "Elm Row": 0.45, "Harbourside": 0.4, "Mill Lane": 0.3}
    hours = {"Central": 60, "Quarry Street": 44, "Elm Row": 38, "Harbourside": 36, "Mill Lane": 28}
    rows = []
    for year in (2023, 2024):
        for month in range(1, 13):
            t = (year - 2023) * 12 + month - 1
            summer = 1.25 if month == 7 else 1.0
            for branch, size in branches.items():
                closed = branch == "Central" and (year, month) in ((2023, 2), (2023, 3))
                base = 4000 * size * summer
                shares = {
                    "Print": 0.62 - 0.009 * t,
                    "E-book": 0.23 + 0.008 * t + (0.02 if branch == "Quarry Street" else 0.0),
                    "Audio": 0.15 + 0.001 * t,
                }
                for fmt, share in shares.items():
                    n = "" if closed else str(round(base * share * rng.uniform(0.95, 1.05)))
                    rows.append([f"{year}-{month:02d}", year, branch, fmt, n])
    path = os.path.join(ROOT, "stories", "libraries", "data", "loans.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["month", "year", "branch", "format", "loans"])
        w.writerows(rows)
    path = os.path.join(ROOT, "stories", "libraries", "data", "branches.csv")
    with open(path, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["branch", "weekly_hours", "visits", "staff"])
        for branch, size in branches.items():
            visits = round(hours[branch] * 1150 * (0.8 + size * 0.4) * rng.uniform(0.95, 1.05))
            w.writerow([branch, hours[branch], visits, round(4 + 14 * size)])


if __name__ == "__main__":
    pools()
    volunteers()
    clinics()
    libraries()
