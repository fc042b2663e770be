"""The worked example of docs/python.md runs as written and finds what its
invented scenario put there: the class difference is a scalp bump around C3,
so the leading region is on the left central strip (the template's
left-precentral or left-postcentral; common practice, no source: C3 lies over
the left sensorimotor cortex)."""

import contextlib
import io
import os
import re
from pathlib import Path

DOC = Path(__file__).resolve().parents[2] / "docs" / "python.md"


def test_worked_example_runs_and_finds_the_left_central_strip(cache, monkeypatch):
    blocks = re.findall(r"```python\n(.*?)```", DOC.read_text(encoding="utf-8"), re.S)
    assert blocks, "docs/python.md has no python block"
    monkeypatch.setenv("PATCHWISE_CACHE", os.fspath(cache))
    printed = io.StringIO()
    scope = {"__name__": "docs_example"}
    with contextlib.redirect_stdout(printed):
        exec(compile(blocks[0], os.fspath(DOC), "exec"), scope)
    top = scope["result"].table(top=1)[0]
    assert top.region in ("left-precentral", "left-postcentral"), printed.getvalue()
    assert "left-precentral" in printed.getvalue()
