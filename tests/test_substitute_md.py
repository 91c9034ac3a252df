"""The Markdown summary of a substitute check (``bomcheck.render.substitute_md``), and the
terminal's table beside it."""

from io import StringIO

from substitute_boards import board  # noqa: F401 (a fixture)
from substitute_boards import alt

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
