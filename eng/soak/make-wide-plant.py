#!/usr/bin/env python3
"""Writes a wide demo plant for the soak runs: N copies of train X300 of the Brackenmoor demo plant, each with its own
unit id, tags and NodeIds (invented, like the demo), plus a clean scenario for it.

usage: make-wide-plant.py COPIES OUTPUT_FOLDER DURATION
"""
import json
import os
import sys

here = os.path.dirname(os.path.abspath(__file__))
samples = os.path.join(here, "..", "..", "config-samples")
copies, out, duration = int(sys.argv[1]), sys.argv[2], sys.argv[3]
os.makedirs(out, exist_ok=True)
plant = json.load(open(os.path.join(samples, "brackenmoor.plant.json")))
train = next(u for u in plant["units"] if u["id"] == "X300")
units = []
for k in range(copies):
    u = json.loads(json.dumps(train))
    u["id"] = f"W{k:03d}"
    for i in u["instruments"]:
        i["tag"] = f"W{k:03d}-{i['tag']}"
        i["node"] = i["node"].replace("X300.", f"W{k:03d}.")
    u["system"] = os.path.abspath(os.path.join(samples, train["system"]))
    u.pop("notes", None)
    units.append(u)
wide = {"site": "Brackenmoor-wide", "notes": "Invented: copies of train X300 for soak runs.", "units": units}
json.dump(wide, open(os.path.join(out, "wide.plant.json"), "w"), indent=1)
scenario = {
    "plant": "wide.plant.json", "start": "2026-03-02T00:00:00Z", "duration": duration, "step": "00:00:01", "seed": 3,
    "faults": [], "lab": {"interval": "04:00:00", "delay": "01:30:00", "sigma": 0.0005},
}
json.dump(scenario, open(os.path.join(out, "wide.scenario.json"), "w"), indent=1)
print(sum(len(u["instruments"]) for u in units), "tags in", copies, "units")
