"""Run every benchmark: `python -m bench` (full size) or `python -m bench --smoke` (CI)."""

import sys

from . import bench_check, bench_network

args = ["--smoke"] if "--smoke" in sys.argv[1:] else []
bench_network.main(args)
bench_check.main(args)
