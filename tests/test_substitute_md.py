"""The Markdown summary of a substitute check (``bomcheck.render.substitute_md``), and the
terminal's table beside it."""

from io import StringIO

import pytest

from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import alt

from bomcheck.cli.main import main
from bomcheck.render.substitute_md import substitute_markdown
from bomcheck.substitute import run_substitute


def test_markdown_and_terminal_show_verdicts_and_reasons(board):
    from bomcheck.render.terminal import make_console, print_substitutes

    bom, design = board
    result = run_substitute(bom, design, [alt("C3", "CAP CER 10NF 100V 10% X5R 0603"),
                                          alt("C5", "CAP CER 100PF 50V 5% C0G 0402")])
    md = substitute_markdown(result)
    assert "| C3 | NEW-PART-1 | C3 | rejected | Rejected for C3: rated 85 degC" in md
    assert "| C5 | NEW-PART-1 | C5 | drop-in |" in md
    buf = StringIO()
    print_substitutes(make_console(file=buf, no_color=True, width=100), result)
    text = buf.getvalue()
    assert "REJECTED" in text and "drop-in" in text and "Overall: REJECTED" in text


# Moved from test_textsafe.py.
def test_substitute_markdown_escapes_hostile_part_text(tmp_path, capsys, monkeypatch):
    markdown_it = pytest.importorskip("markdown_it", reason="markdown-it-py (test extra)")
    monkeypatch.chdir(tmp_path)
    code = main(["substitute", "--original", "<script>x|y 100nF 16V X7R", "--proposed",
                 "<!-- 100nF 25V X7R `a` <img src=x onerror=alert(1)>", "--v-dc", "5",
                 "--t-ambient", "25", "--markdown", "-"])
    assert code in (0, 1)
    text = capsys.readouterr().out
    html = markdown_it.MarkdownIt("commonmark").enable("table").render(text)
    assert "<script" not in html and "<img" not in html and "<!--" not in html
    assert "&lt;script&gt;x|y" in html  # one cell: the pipe did not split it
