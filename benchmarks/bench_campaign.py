"""Campaign throughput: designs per hour at the demo settings, and the 1 -> 2 worker speed-up.

Runs the same designs of datasets/demo.toml (a fixed, seeded subset) through the local
process runner with 1 and 2 workers and through a Dask LocalCluster with 1 and 2 workers,
each into a fresh store, and prints designs per hour and the speed-up ratios measured in
this run.  Goal: >= 1.7x from 1 to 2 workers.  Takes about 10-15 minutes on 2 cores.

    python benchmarks/bench_campaign.py [--designs 8]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from surrogate.campaign import Store, load_campaign, run_campaign, sample_designs
from surrogate.campaign._task import evaluate_design
from surrogate.shapes import get_family

ROOT = Path(__file__).resolve().parents[1]


def run(spec, designs, folder, label, **runner):
    store = Store.create(folder / f"{label}.sqlite", spec=spec.to_dict(), code_version="bench")
    store.add_designs(designs)
    t0 = time.perf_counter()
    summary = run_campaign(store, spec.to_dict(), evaluate_design, **runner)
    elapsed = time.perf_counter() - t0
    store.close()
    assert summary.failed == 0, f"{label}: {summary.failed} designs failed"
    return elapsed


def main():
    parser = argparse.ArgumentParser(description=__doc__)
    parser.add_argument("--designs", type=int, default=8)
    args = parser.parse_args()
    spec = load_campaign(ROOT / "datasets" / "demo.toml")
    designs = sample_designs(get_family(spec.family), spec.bounds, spec.fixed, count=args.designs, seed=7)
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        times = {
            "local-1": run(spec, designs, folder, "local-1", workers=1),
            "local-2": run(spec, designs, folder, "local-2", workers=2),
            "dask-1": run(spec, designs, folder, "dask-1", dask_workers=1),
            "dask-2": run(spec, designs, folder, "dask-2", dask_workers=2),
        }
    n = len(designs)
    for label, t in times.items():
        print(f"{label:8s} {n} designs in {t:7.1f} s = {3600 * n / t:6.1f} designs/hour")
    print(f"speed-up 1 -> 2 workers: local {times['local-1'] / times['local-2']:.2f}x, "
          f"dask {times['dask-1'] / times['dask-2']:.2f}x (goal >= 1.7x)")
    print(f"dask / local overhead with 2 workers: {times['dask-2'] / times['local-2']:.2f}x")


if __name__ == "__main__":
    main()
