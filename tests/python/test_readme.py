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


def test_the_python_package_readme_blocks_run():
    # The package's own README (its PyPI page).
    text = (README.parent / "bindings-py" / "README.md").read_text()
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert blocks, "the package README has a Python example"
    for block in blocks:
        exec(compile(block, "bindings-py/README.md", "exec"), {})
