"""Run every benchmark: `python -m bench` (full size) or `python -m bench --smoke` (CI)."""

import sys

from . import (bench_accessories, bench_audit, bench_check, bench_import, bench_network,
               bench_pages, bench_reimport, bench_scale_check, bench_scale_json, bench_scale_memory)

args = ["--smoke"] if "--smoke" in sys.argv[1:] else []
bench_network.main(args)
bench_check.main(args)
bench_accessories.main(args)
# the scale targets: each prints its ratio against its limit, measured in the same run
bench_scale_check.main(args)
bench_scale_memory.main(args)
bench_scale_json.main(args)
bench_import.main(args)
bench_reimport.main(args)
bench_audit.main(args)
bench_pages.main(args)
