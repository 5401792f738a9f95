"""Design-map throughput: a 2-D map of the servo case (amplifier gain x load inertia) at two
resolutions on 1, 2 and all worker processes; cells per second and speed-up over one worker,
measured in the same run. Not run by the tests (wall-clock figures belong here only).

    PYTHONPATH=. python3 benchmarks/bench_map.py
"""

from __future__ import annotations

import json
import time
from pathlib import Path

from robust.analysis.designmap import design_map, parse_axis
from robust.analysis.executor import default_workers
from robust.model.case import load_case

CASE = Path(__file__).resolve().parent.parent / "cases" / "servo_pid.toml"


def main() -> None:
    case = load_case(CASE)
    axes = [parse_axis("Ka=2..80", case), parse_axis("J=5u..100u", case)]
    counts = sorted({1, 2, default_workers()})
    for resolution in (12, 24):
        reference = None
        base = None
        for workers in counts:
            start = time.perf_counter()
            result = design_map(case, axes, resolution=resolution, depth=3, max_cells=8000, workers=workers)
            seconds = time.perf_counter() - start
            data = result.as_dict()
            data.pop("seconds")
            same = reference is None or data == reference
            reference = reference or data
            rate = result.decisions / seconds
            base = base or rate
            print(f"resolution {resolution:>2}, {workers} worker(s): {result.decisions} cell decisions, "
                  f"{rate:7.1f} cells/s, speed-up x{rate / base:.2f} over 1 worker, "
                  f"same map: {same}")
    print(json.dumps({"workers_tried": counts}))


if __name__ == "__main__":
    main()
