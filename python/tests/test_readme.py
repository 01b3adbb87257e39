"""The README's "From Python" lines are real: run as shown, they print the
lines the README shows (outside the … elisions), in the same order."""

import contextlib
import io
import re


def test_readme_python_block_is_real_output(at_repo):
    text = (at_repo / "README.md").read_text()
    section = text.split("## From Python", 1)[1].split("\n## ", 1)[0]
    code = re.search(r"```python\n(.*?)```", section, re.S).group(1)
    shown = re.search(r"```\n(.*?)```", section.split(code, 1)[1], re.S).group(1)
    assert len(code.strip().splitlines()) == 5
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        exec(compile(code, "README.md", "exec"), {})
    actual = [line.rstrip() for line in out.getvalue().splitlines()]
    at = 0
    for want in shown.splitlines():
        if not want.strip() or want.strip() == "…":
            continue
        assert want.rstrip() in actual[at:], f"README line not in the output: {want!r}"
        at = actual.index(want.rstrip(), at) + 1
