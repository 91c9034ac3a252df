"""Normalise stage, data: the canonical BOM fields and the header aliases that name them (one
tuple per field, best alias first), with the labels and header units read beside them. A new
column alias goes here."""

from __future__ import annotations

FIELDS: tuple[str, ...] = (
    "refdes", "qty", "value", "description", "manufacturer", "mpn", "package",
    "voltage", "tolerance", "dielectric", "temperature", "fitted", "notes",
    "category", "level", "item", "ipn", "uom", "value_alt", "description_alt",
)
# Fields whose weaker-alias columns are read too, as a second source of the same text: an EDA
# export may carry "Comment" beside "Value" and "Part Description" beside "Description", each
# with its own rating text (common practice of EDA BOM exports); the second column is mapped to
# ``<field>_alt`` and merged conservatively with the first.
ALT_FIELDS: dict[str, str] = {"value": "value_alt", "description": "description_alt"}

# Aliases as written in real exports (English, German, French), best first: when two headers
# match the same field, the one matching the earlier alias wins and the other stays unmapped.
# Matching folds case, accents and punctuation, so "Ref. Des." and "REFDES" are one alias.
ALIASES: dict[str, tuple[str, ...]] = {
    "refdes": (
        "Designator", "Designators", "RefDes", "Reference Designator", "Reference Designators",
        "Reference", "References", "Ref", "Refs", "Part Reference", "Part References",
        "Designator List", "Refdes List", "Ref Designator", "Ref Designators",
        "Reference Designation", "Parts", "Part",
        "Bauteil", "Bauteile", "Referenz", "Referenzen", "Bezeichner", "Referenzbezeichner",
        "Referenzkennzeichen", "Bauteilreferenz",
        "BMK", "Betriebsmittelkennzeichen",
        "Repère", "Repères", "Repère topologique", "Repères topologiques",
        "Référence topologique", "Repérage",
    ),
    "qty": (
        "Qty", "Quantity", "Qnty", "Qty per board", "Quantity per board", "Qty per PCB",
        "Quantity per PCB", "Qty per assembly", "Qty Per", "Quantity Per", "Qty/Assy",
        "Extended Qty", "Count", "Pcs",
        "Menge", "Anzahl", "Stückzahl", "Stück", "Stk", "Menge pro", "Menge je Baugruppe",
        "Quantité", "Qté", "Quantité par", "Nombre", "Nb",
    ),
    "value": (
        "Value", "Val", "Comment", "Capacitance", "Nominal Value", "Part Value",
        "Wert", "Kapazität", "Nennwert",
        "Valeur", "Capacité", "Valeur nominale",
    ),
    "description": (
        "Description", "Desc", "Part Description", "Item Description", "Details",
        "Beschreibung", "Bezeichnung", "Artikelbezeichnung", "Teilebeschreibung",
        "Désignation", "Libellé",
    ),
    "manufacturer": (
        "Manufacturer", "Manufacturer Name", "Mfr", "Mfr Name", "Mfg", "Mfg Name", "Maker",
        "Make", "Brand",
        "Hersteller", "Herstellername",
        "Fabricant", "Constructeur", "Marque",
    ),
    "mpn": (
        "MPN", "Manufacturer Part Number", "Manufacturer Part No", "Manufacturer PN",
        "Mfr Part Number", "Mfr Part No", "Mfr Part", "Mfr PN", "Mfg Part Number", "Mfg Part No",
        "Mfg PN", "Manufacturer Part",
        "Part Number", "Part No", "PN",
        "Herstellerteilenummer", "Hersteller Teilenummer", "Herstellerartikelnummer",
        "Herstellernummer", "Teilenummer",
        "Référence fabricant", "Réf fabricant", "Référence constructeur", "Numéro de pièce",
    ),
    "package": (
        "Package", "Footprint", "Case", "Case Size", "Package Case", "Case Package", "Size",
        "PCB Footprint",
        "Gehäuse", "Bauform", "Baugröße",
        "Boîtier", "Empreinte",
    ),
    "voltage": (
        "Voltage", "Rated Voltage", "Voltage Rating", "Voltage Rated", "Working Voltage",
        "WVDC", "VDC", "Volts", "V",
        "Spannung", "Nennspannung", "Spannungsfestigkeit",
        "Tension", "Tension nominale", "Tension assignée",
    ),
    "tolerance": ("Tolerance", "Tol", "Toleranz", "Tolérance"),
    "dielectric": (
        "Dielectric", "Dielectric Material", "Dielectric Type", "Temperature Coefficient",
        "Temp Coefficient", "Tempco", "TC", "Material", "Technology", "Capacitor Type",
        "Dielektrikum", "Keramiktyp", "Technologie",
        "Diélectrique",
    ),
    "temperature": (
        "Temperature", "Temp", "Rated Temperature", "Rated Temp", "Max Temperature", "Max Temp",
        "Temperature Rating", "Temp Rating", "Maximum Temperature",
        "Operating Temperature", "Operating Temp", "Temperature Range", "Temp Range",
        "Temperatur", "Betriebstemperatur", "Temperaturbereich", "Maximaltemperatur",
        "Température", "Température de fonctionnement", "Plage de température",
    ),
    "fitted": (
        "Fitted", "Fit", "Populate", "Populated", "Mount", "Mounted", "Assembly", "Assemble",
        "Place", "Placed", "Install", "Installed", "Stuff", "Stuffed",
        "DNP", "DNI", "DNF", "Do Not Populate", "Do Not Place", "Do Not Fit", "No Fit",
        "Not Fitted", "No Pop", "No Populate",
        "Bestückt", "Bestückung", "Bestücken", "Nicht bestückt",
        "Monté", "Montage", "À monter", "Non monté",
    ),
    "notes": (
        "Notes", "Note", "Remarks", "Remark", "Comments",
        "Bemerkung", "Bemerkungen", "Anmerkung", "Anmerkungen", "Hinweis", "Kommentar",
        "Remarque", "Remarques", "Commentaire", "Commentaires", "Observations",
    ),
    # The part's kind as a catalogue or ERP names it ("Aluminum Electrolytic Capacitors"): read
    # for the technology when no other cell states it.
    "category": (
        "Category", "Part Category", "Component Category", "Product Category", "Type",
        "Part Type", "Component Type", "Family", "Part Family", "Product Family", "Commodity",
        "Kategorie", "Typ", "Bauteiltyp", "Bauteilart", "Familie", "Warengruppe",
        "Catégorie", "Famille", "Type de composant",
    ),
    # Multi-level (ERP/PLM) exports: the level of each row, its item (find) number, the internal
    # part number and the unit of measure.
    "level": ("Level", "Lvl", "BOM Level", "Indented Level", "Ebene", "Stufe", "Strukturstufe",
              "Niveau"),
    "item": ("Item", "Item No", "Item Number", "Find No", "Find Number", "Line No", "Position",
             "Pos", "Positionsnummer", "Posnr", "Poste", "Numéro de poste"),
    "ipn": ("Internal Part Number", "Internal PN", "IPN", "Company Part Number", "Our Part Number",
            "Item Code", "Part Code", "Sachnummer", "Materialnummer", "Artikelnummer",
            "Référence interne", "Code article"),
    "uom": ("UoM", "Unit of Measure", "Unit", "Units", "ME", "Mengeneinheit", "Einheit", "Unité",
            "Unité de mesure"),
}

# Fitted-column headers that ask the negative question ("DNP?"): a mark in them means NOT fitted.
NEGATIVE_FITTED: tuple[str, ...] = (
    "DNP", "DNI", "DNF", "Do Not Populate", "Do Not Place", "Do Not Fit", "No Fit",
    "Not Fitted", "No Pop", "No Populate", "Nicht bestückt", "Non monté",
)

FIELD_LABELS: dict[str, str] = {
    "refdes": "designator", "qty": "quantity", "value": "value", "description": "description",
    "manufacturer": "manufacturer", "mpn": "manufacturer part number", "package": "package",
    "voltage": "rated voltage", "tolerance": "tolerance", "dielectric": "dielectric",
    "temperature": "rated temperature", "fitted": "fitted/DNP", "notes": "notes",
    "category": "category", "level": "level", "item": "item number",
    "ipn": "internal part number", "uom": "unit of measure",
    "value_alt": "second value", "description_alt": "second description",
}

# Units a header may give in brackets ("Capacitance (uF)", "Voltage [kV]", "Rated Temp (°C)"),
# per field, folded to lower case with the micro signs as u: what a bare number in that column
# means (the unit written after it).
HEADER_UNITS: dict[str, dict[str, str]] = {
    "value": {"pf": "pF", "nf": "nF", "uf": "uF", "mf": "mF", "f": "F"},
    "voltage": {"v": "V", "vdc": "VDC", "vac": "VAC", "kv": "kV"},
    "temperature": {"°c": "°C", "c": "°C", "degc": "°C", "deg c": "°C", "k": "K",
                    "°f": "°F", "degf": "°F", "f": "°F"},
    "tolerance": {"%": "%"},
}
