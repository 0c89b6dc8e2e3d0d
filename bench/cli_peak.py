"""Run the `withstand` command with the given arguments, then write this process's peak
resident memory (bytes) to the file named first: `python -m bench.cli_peak OUT check ...`."""

import resource
import sys
from pathlib import Path

from registry.cli import main

out, sys.argv = Path(sys.argv[1]), ["withstand", *sys.argv[2:]]
try:
    main()
finally:
    out.write_text(str(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * 1024))
