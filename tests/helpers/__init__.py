"""Helpers shared by the tests, imported as ``helpers.<module>`` (pyproject.toml puts tests/
on the path with ``pythonpath = ["tests"]``): the session's template databases
(``databases``), the web login and API tokens (``web``), the engine's builders (``builders``),
the real server (``live_server``), the event-writing workers (``chainwork``), the fault tests'
tools (``faultwork``), Chromium (``browser``), LibreOffice (``libreoffice``) and HTML forms
read as a browser submits them (``formtools``)."""
