"""Exchange: tables out, casefiles in.

``writers`` writes a ``Table`` as CSV, JSON or terminal text, with
spreadsheet formulas neutralised; ``export`` writes every table of a
casefile's analyses as CSV, JSON and one XLSX workbook; ``importer`` builds
a casefile from the user's own CSV or XLSX exports and a mapping.
"""

from forensic.core.faces import lazy_face

__all__ = ["casefile_tables", "dumps_json", "import_casefile", "neutralise", "tables_json", "to_csv", "to_text", "to_xlsx", "write_csv_dir"]

__getattr__, __dir__ = lazy_face(__name__, {
    "casefile_tables": ".export",
    "dumps_json": ".writers",
    "import_casefile": ".importer",
    "neutralise": ".writers",
    "tables_json": ".export",
    "to_csv": ".writers",
    "to_text": ".writers",
    "to_xlsx": ".export",
    "write_csv_dir": ".export",
})
