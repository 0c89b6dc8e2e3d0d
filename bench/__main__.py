"""Run every benchmark: `python -m bench` (full size) or `python -m bench --smoke` (CI)."""

import sys

from . import (bench_audit, bench_check, bench_import, bench_network, bench_pages,
               bench_reimport)

args = ["--smoke"] if "--smoke" in sys.argv[1:] else []
bench_network.main(args)
bench_check.main(args)
# the scale targets: each prints its ratio against its limit, measured in the same run
bench_import.main(args)
bench_reimport.main(args)
bench_audit.main(args)
bench_pages.main(args)
