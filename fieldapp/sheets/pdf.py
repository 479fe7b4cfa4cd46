"""The job sheet as a PDF: the sheet context (fieldapp/sheets/context.py) rendered by
templates/sheets/job_sheet.html and printed by WeasyPrint (A4, page numbers, the cautions in
every page footer). Plain values in, bytes out: no models, no Flask.
"""

from __future__ import annotations

from pathlib import Path

from jinja2 import Environment, FileSystemLoader, select_autoescape
from weasyprint import HTML  # imported with the app, not on the first download (about 1 s)

from fieldapp.sheets.context import sheet_context

TEMPLATES = Path(__file__).resolve().parents[2] / "templates"
TEMPLATE = "sheets/job_sheet.html"

_env = Environment(loader=FileSystemLoader(TEMPLATES), autoescape=select_autoescape(
    default=True, default_for_string=True))


def sheet_html(document: dict, diagnoses: list, people: dict | None = None, **kwargs) -> str:
    """The sheet as one HTML document with its print stylesheet inline."""
    return _env.get_template(TEMPLATE).render(**sheet_context(document, diagnoses, people,
                                                              drawing="print", **kwargs))


def sheet_document(document: dict, diagnoses: list, people: dict | None = None, **kwargs):
    """The sheet laid out on A4 pages (a WeasyPrint ``Document``: its pages can be inspected
    before ``write_pdf``)."""
    return HTML(string=sheet_html(document, diagnoses, people, **kwargs),
                base_url=str(TEMPLATES)).render()


def sheet_pdf(document: dict, diagnoses: list, people: dict | None = None, **kwargs) -> bytes:
    """The sheet as PDF bytes (A4)."""
    return sheet_document(document, diagnoses, people, **kwargs).write_pdf()
