"""The README's Python examples run as written."""

import pathlib
import re

README = pathlib.Path(__file__).resolve().parents[2] / "README.md"


def test_readme_python_blocks_run(monkeypatch):
    monkeypatch.chdir(README.parent)  # the examples name files relative to the repository root
    blocks = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)
    assert blocks, "the README has Python examples"
    for block in blocks:
        exec(compile(block, "README.md", "exec"), {})
