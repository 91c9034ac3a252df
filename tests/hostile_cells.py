"""Hostile cell texts for the output-integrity tests (bomcheck.render.textsafe and the files that
bomcheck.render.outfiles writes): a BOM whose cells every writer must carry safely."""

# Hostile cell texts: characters XML 1.0 forbids (U+FFFE, U+FFFF, C0 controls), markup, a
# Markdown table break, formula leads and a formula hidden behind a separator.
HOSTILE = {
    "ffffe": "CAP\ufffe 100nF\uffff",
    "script": "<script>alert(1)</script><img src=x onerror=alert(2)><!-- c",
    "pipe": "x\\|y | z",
    "formula": "=1+1",
    "hidden": "x;=1+1",
    "controls": "a\x01b\x07c\x1bd\x7f",
}
# The BOM's file name is input text too: it heads the Markdown, HTML and SARIF outputs.
BOM_NAME = "bom <img src=x onerror=alert(2)> <!-- x|y \x01 *b*.csv"
HEADER = "Designator,Qty,Value,Description,Manufacturer Part Number,Fitted\n"
DESIGN = "refdes,v_dc [V],t_ambient_c [°C],c_min_f\n*,5,55,none\n"


def bom_lines() -> str:
    """BOM lines, one per hostile text (in the text and part-number cells), and a nodata line."""
    lines = []
    for i, text in enumerate(HOSTILE.values(), 1):
        cell = '"' + text.replace('"', '""') + '"'
        lines.append(f"C{i},1,100nF 16V X7R,{cell},{cell},Yes\n")
    # a placement whose numbers the audit cannot use gives a nodata verdict with a message
    lines.append("C9,1,TBD,=HYPERLINK(\"x\"),-2+3,Yes\n")
    return "".join(lines)
