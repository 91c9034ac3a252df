"""Column headers to canonical fields: aliases, folding, user overrides, layout errors."""

import pytest

from bomcheck.parse import columns
from bomcheck.parse.columns import (
    ColumnOverrides,
    header_predicate,
    is_negative_fitted,
    load_column_map,
    map_columns,
    match_field,
    merge_overrides,
    normalise_header,
)
from bomcheck.errors import InputError


@pytest.mark.parametrize(
    ("header", "folded"),
    [
        ("Gehäuse", "gehause"),  # German umlaut folded to its base letter
        ("Ref. Des.", "refdes"),
        ("REF-DES", "refdes"),
        ("ref_des", "refdes"),
        ("Quantité", "quantite"),  # French accent folded
        ("Baugröße", "baugrosse"),  # German sharp s written out as "ss"
        ("  Qty.  ", "qty"),
        ("Voltage [V]", "voltagev"),
    ],
)
def test_normalise_header_folds_case_accents_and_punctuation(header, folded):
    assert normalise_header(header) == folded


# Headers as EDA tools and hand-made BOMs write them (common practice); German and French
# words are the ordinary dictionary words for the field.
@pytest.mark.parametrize(
    ("header", "field"),
    [
        ("Designator", "refdes"), ("RefDes", "refdes"), ("Ref Des", "refdes"),
        ("Reference", "refdes"), ("Part Reference", "refdes"), ("REFERENCE DESIGNATORS", "refdes"),
        ("Qty", "qty"), ("Quantity", "qty"), ("Qty per board", "qty"),
        ("Value", "value"), ("Comment", "value"),
        ("Description", "description"),
        ("Manufacturer", "manufacturer"), ("Mfr.", "manufacturer"),
        ("MPN", "mpn"), ("Mfr. Part No.", "mpn"), ("Manufacturer Part Number", "mpn"),
        ("Part Number", "mpn"),
        ("Footprint", "package"), ("Package", "package"), ("Case/Package", "package"),
        ("Voltage", "voltage"), ("Voltage [V]", "voltage"), ("Rated Voltage", "voltage"),
        ("Tolerance", "tolerance"), ("Tol.", "tolerance"),
        ("Dielectric", "dielectric"), ("Temperature Coefficient", "dielectric"),
        ("Temperature", "temperature"), ("Operating Temperature", "temperature"),
        ("Fitted", "fitted"), ("DNP", "fitted"), ("Populate", "fitted"),
        ("Notes", "notes"), ("Remarks", "notes"), ("Comments", "notes"),
        # German
        ("Bauteil", "refdes"), ("Wert", "value"), ("Menge", "qty"), ("Anzahl", "qty"),
        ("Bemerkung", "notes"), ("Bezeichnung", "description"), ("Hersteller", "manufacturer"),
        ("Gehäuse", "package"), ("Bauform", "package"), ("Spannung", "voltage"),
        ("Toleranz", "tolerance"), ("Bestückt", "fitted"), ("Nicht bestückt", "fitted"),
        # French
        ("Repère", "refdes"), ("Repere", "refdes"), ("Valeur", "value"), ("Quantité", "qty"),
        ("Quantite", "qty"), ("Désignation", "description"), ("Fabricant", "manufacturer"),
        ("Boîtier", "package"), ("Tension", "voltage"), ("Tolérance", "tolerance"),
        ("Remarque", "notes"), ("Monté", "fitted"), ("Non monté", "fitted"),
        ("Référence fabricant", "mpn"),
    ],
)
def test_headers_match_their_field(header, field):
    assert match_field(header) == field


@pytest.mark.parametrize("header", ["Supplier", "Unit price", "Lead time", "", "###"])
def test_unrelated_headers_match_nothing(header):
    assert match_field(header) is None


@pytest.mark.parametrize(
    ("header", "negative"),
    [("DNP", True), ("Do Not Populate", True), ("DNI", True), ("Nicht bestückt", True),
     ("Non monté", True), ("Fitted", False), ("Populate", False), ("Bestückt", False),
     ("Monté", False)],
)
def test_fitted_header_polarity(header, negative):
    assert is_negative_fitted(header) is negative


def test_map_columns_best_alias_wins_and_one_header_one_field():
    headers = ["Item", "Comment", "Designator", "Value", "Value (2)", "Qty", "Footprint"]
    got = map_columns(headers)
    # "Value" beats "Comment" for value; the leftmost of two "Value" columns wins. "Comment",
    # a weaker alias of the value, is still read as the second value column (it may hold a
    # rating the first lacks).
    assert got == {"refdes": "Designator", "qty": "Qty", "value": "Value",
                   "package": "Footprint", "item": "Item", "value_alt": "Comment"}


def test_map_columns_user_columns_come_first():
    headers = ["Pos", "Typ", "Anzahl", "Wert"]
    got = map_columns(headers, ColumnOverrides(columns={"refdes": "Pos", "value": "Typ"}))
    assert got == {"refdes": "Pos", "qty": "Anzahl", "value": "Typ"}


def test_map_columns_user_header_matched_when_folded():
    got = map_columns(["POS.", "Typ"], ColumnOverrides(columns={"refdes": "pos",
                                                               "value": "typ"}))
    assert got == {"refdes": "POS.", "value": "Typ"}


def test_map_columns_user_aliases():
    got = map_columns(["Pos", "Typ"], ColumnOverrides(aliases={"refdes": ("Pos",),
                                                              "value": ("Typ",)}))
    assert got == {"refdes": "Pos", "value": "Typ"}


def test_named_header_missing_is_an_error_listing_the_headers():
    with pytest.raises(InputError) as err:
        map_columns(["Designator", "Value"], ColumnOverrides(columns={"value": "Comment"}),
                    path="bom.csv")
    msg = str(err.value)
    assert "bom.csv" in msg and "'Comment'" in msg and "'Designator', 'Value'" in msg
    assert "\n" not in msg


def test_unknown_field_is_an_error_with_a_suggestion():
    with pytest.raises(InputError, match="did you mean 'refdes'"):
        map_columns(["Designator", "Value"], ColumnOverrides(columns={"refdez": "Designator"}))


def test_no_designator_column_lists_headers_and_closest_matches():
    with pytest.raises(InputError) as err:
        map_columns(["Desgnator", "Valeu", "Qty"], path="b.csv")
    msg = str(err.value)
    assert msg.startswith("b.csv: no designator column among the headers found")
    assert "'Desgnator', 'Valeu', 'Qty'" in msg
    assert "'Desgnator' ~ Designator (refdes)" in msg
    assert "--columns refdes=HEADER" in msg and "\n" not in msg


def test_no_value_or_description_column_is_an_error():
    with pytest.raises(InputError, match="no value or description column") as err:
        map_columns(["Designator", "Qty", "Valeu"])
    msg = str(err.value)
    assert "closest matches: 'Valeu' ~ " in msg and "(value)" in msg
    assert "'Designator' ~" not in msg  # already the designator column


@pytest.mark.parametrize(
    ("cells", "is_header"),
    [
        (["Designator", "Value", "Qty"], True),
        (["", "Bauteil", "Wert", ""], True),
        (["Board KV-2210 bill of materials"], False),
        (["Reference: PRJ-12", "Rev B"], False),
        (["Designator list"], False),  # a title that happens to be an alias, alone
        (["Designator", "Foo"], False),  # a designator and nothing else known
        (["C1", "100nF", "1"], False),
    ],
)
def test_header_predicate(cells, is_header):
    assert header_predicate()(cells) is is_header


def test_header_predicate_knows_user_named_columns():
    pred = header_predicate(ColumnOverrides(columns={"refdes": "Pos", "value": "Typ"}))
    assert pred(["Pos", "Typ"]) and not header_predicate()(["Pos", "Typ"])


def test_toml_column_map(tmp_path):
    path = tmp_path / "map.toml"
    path.write_text('[columns]\nrefdes = "Pos."\nvalue = "Wert/Typ"\n\n'
                    '[aliases]\nqty = ["Stückliste Anzahl"]\n', encoding="utf-8")
    ov = load_column_map(str(path))
    assert dict(ov.columns) == {"refdes": "Pos.", "value": "Wert/Typ"}
    got = map_columns(["Pos.", "Wert/Typ", "Stückliste Anzahl"], ov)
    assert got == {"refdes": "Pos.", "qty": "Stückliste Anzahl", "value": "Wert/Typ"}


def test_toml_top_level_keys_and_command_line_wins(tmp_path):
    path = tmp_path / "map.toml"
    path.write_text('refdes = "Pos"\nvalue = "Typ"\n', encoding="utf-8")
    ov = merge_overrides(load_column_map(str(path)),
                         ColumnOverrides(columns={"value": "Wert"}))
    assert dict(ov.columns) == {"refdes": "Pos", "value": "Wert"}


@pytest.mark.parametrize(
    ("text", "problem"),
    [
        ("refdes = \n", "not valid TOML"),
        ('refdez = "Pos"\n', "unknown field"),
        ("refdes = 3\n", "not a header name"),
        ('[colums]\nrefdes = "Pos"\n', "unknown table"),
        ('[aliases]\nrefdes = [1, 2]\n', "not a list of header names"),
    ],
)
def test_bad_column_map_names_the_file(tmp_path, text, problem):
    path = tmp_path / "map.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=problem) as err:
        load_column_map(str(path))
    assert str(path) in str(err.value)


def test_missing_column_map_file(tmp_path):
    with pytest.raises(InputError, match="not found"):
        load_column_map(str(tmp_path / "none.toml"))


# Headers of ERP/PLM and contract-manufacturer exports (issue 11), English, German, French.
@pytest.mark.parametrize(
    ("header", "field"),
    [("Ref. Designator", "refdes"), ("Ref Des", "refdes"), ("Reference(s)", "refdes"),
     ("Qty Per", "qty"), ("Quantity Per", "qty"), ("Menge pro", "qty"), ("Quantité par", "qty"),
     ("Category", "category"), ("Type", "category"), ("Family", "category"),
     ("Kategorie", "category"), ("Warengruppe", "category"), ("Catégorie", "category"),
     ("Famille", "category"), ("Mfr Name", "manufacturer"), ("Mfr Part No", "mpn"),
     ("Manufacturer Part Number", "mpn"), ("Level", "level"), ("Ebene", "level"),
     ("Niveau", "level"), ("Item", "item"), ("Find No", "item"), ("UoM", "uom"),
     ("Mengeneinheit", "uom"), ("Internal Part Number", "ipn"), ("Sachnummer", "ipn"),
     ("Rated Temp (°C)", "temperature")],
)
def test_export_headers_match_their_field(header, field):
    assert match_field(header) == field


@pytest.mark.parametrize(
    ("header", "fld", "unit"),
    [("Capacitance (uF)", "value", "uF"), ("Capacitance (µF)", "value", "uF"),
     ("Voltage [V]", "voltage", "V"), ("Voltage (kV)", "voltage", "kV"),
     ("Rated Temp (°C)", "temperature", "°C"), ("Tolerance (%)", "tolerance", "%"),
     ("Voltage (Rev A)", "voltage", None), ("Value", "value", None),
     ("Capacitance (V)", "value", None)],
)
def test_header_units(header, fld, unit):
    assert columns.header_unit(header, fld) == unit


def test_two_columns_for_one_field_are_reported_and_the_unit_column_is_used():
    # Issue 9 class 8: never a silent leftmost choice between "Voltage (Rev A)" and "Voltage (V)".
    headers = ["Designator", "Voltage (Rev A)", "Value", "Voltage (V)", "MPN", "Part Number",
               "MPN 2"]
    got = map_columns(headers)
    assert got["voltage"] == "Voltage (V)"
    assert columns.competing_columns(headers, got) == [
        ("voltage", "Voltage (V)", ["Voltage (Rev A)"])]


def test_weaker_value_and_description_columns_are_second_sources():
    # Common practice of EDA BOM exports: "Comment" beside "Value" and "Part Description"
    # beside "Description" each carry rating text; both are read (the second as ``_alt``).
    headers = ["Comment", "Description", "Designator", "Footprint", "Quantity", "Value",
               "Part Description"]
    got = map_columns(headers)
    assert got["value"] == "Value" and got["value_alt"] == "Comment"
    assert got["description"] == "Description" and got["description_alt"] == "Part Description"
    # Alone, "Comment" is the value column and nothing is second.
    assert map_columns(["Designator", "Comment"]) == {"refdes": "Designator", "value": "Comment"}
