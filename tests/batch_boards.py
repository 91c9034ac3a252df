"""Two small invented boards and their manifest for the batch tests (bomcheck.pipeline.batch, its
combined outputs in bomcheck.render.batch_out, and where-used queries over them)."""

import pytest

from bomcheck.cli.main import main

HEADER = "Designator,Qty,Value,Description,Manufacturer Part Number\n"
DESIGN_HEADER = "refdes,v_dc [V],t_ambient_c [°C],c_min_f\n"
# Invented parts. 3.3 V on a 50 V ceramic passes every shipped ceramic rule; 15 V on a 16 V
# ceramic fails them (common practice: class II ceramics are derated well under 90 %).
SHARED = "CAP CER 1UF 16V 10% X7R 0603,KV-0603-105-16"
BOARDS = {
    "Tarn-A": ("C1,1,100nF,CAP CER 0.1UF 50V 10% X7R 0603,KV-0603-104-50\n"
               f"C2,1,1uF,{SHARED}\n", "C1,3.3,40,10 nF\nC2,3.3,40,10 nF\n"),
    "Tarn-B": (f"C7,1,1uF,{SHARED}\nC9,1,1uF,{SHARED}\n", "C7,15,40,10 nF\nC9,3.3,60,10 nF\n"),
}


@pytest.fixture
def boards(tmp_path, monkeypatch):
    """Two invented boards and their manifest in ``tmp_path`` (the working directory)."""
    monkeypatch.chdir(tmp_path)
    lines = []
    for product, (bom, design) in BOARDS.items():
        (tmp_path / f"{product}.csv").write_text(HEADER + bom, encoding="utf-8")
        (tmp_path / f"{product}-design.csv").write_text(DESIGN_HEADER + design,
                                                        encoding="utf-8")
        lines += ["[[board]]", f'product = "{product}"', f'bom = "{product}.csv"',
                  f'design = "{product}-design.csv"', ""]
    (tmp_path / "boards.toml").write_text("\n".join(lines), encoding="utf-8")
    return tmp_path


def batch(*argv):
    return main(["audit", "--manifest", "boards.toml", "--no-config", *argv])
