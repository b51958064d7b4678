#!/usr/bin/env python3
"""A story of N frames over the demo pools data, for frames per second
(tests/bench/run). Usage: make_frames.py N > story.cresc"""
import sys

n = int(sys.argv[1])
pools = ["Alder Park", "Millrace", "Harrow Lane", "Westbrook"]
print('story "Many frames over the pools data"')
print('source "Invented demo data"')
print('conclusion "Frames per second."')
print('data visits from "data/visits.csv" {\n  month: month\n  pool: text\n  visits: number\n}')
print("view monthly = visits\n  | by month, pool: visits = sum(visits)")
print('view yearly = visits\n  | keep month >= "2024-01"\n  | by pool: visits = sum(visits)\n  | sort visits descending')
for i in range(n):
    pool = pools[i % 4]
    print(f'frame "Frame {i + 1}: {pool}" {{')
    if i % 5 == 0:
        if (i // 5) % 2 == 0:
            print("  line monthly: x month, y visits, series pool")
            print('  y title "Visits per month"')
        else:
            print("  bars yearly: category pool, value visits")
            print('  y title "Visits in 2024"')
    print(f'  spotlight "{pool}"')
    print(f'  takeaway "Takeaway {i + 1}."')
    print("}")
