"""Sizes the app accepts on every path (form, JSON API, import), chosen for real boards.

- ``MAX_OUTLETS_PER_CIRCUIT`` = 60: a ring final circuit serves up to 100 m² of floor
  (BS 7671 Appendix 15, common practice); even a large open-plan ring rarely carries more
  than about 30 points, so 60 outlets (spurs and FCUs included) leaves room and no more.
- ``MAX_CIRCUITS_PER_JOB`` = 24: a job covers one board or installation; a large
  three-phase 12-way board has 36 single-phase ways, and rarely more than a dozen of them are
  rings. A bigger installation is split into one job per board. Each circuit adds its own
  pages, ring picture and plot to the sheet, so this bounds the PDF as much as the outlets.
- ``MAX_OUTLETS_PER_JOB`` = 400: a large office floor of a dozen well-filled rings. With the
  circuit limit this bounds the job sheet to about 50-100 A4 pages (measured on this kind of
  machine: 5 circuits x 60 outlets, 38 pages, 8 s at load 4; 10 x 40, 43 pages, 52 s at load
  10), where 60 circuits of 60 outlets would be ~450 pages and minutes of work.
- Text fields: the lengths of the forms and the database columns; job notes 4,000
  characters.
- ``MAX_DOCUMENT_BYTES`` = 1 MB: far above the largest job these limits allow (about 150 kB
  of indented JSON), so a file is refused for what it holds, with the field named;
  ``MAX_CONTENT_LENGTH`` (the whole request) a little more for the form's multipart wrapping.
- ``MAX_READING_CHARS`` = 32: a typed reading ("0,52", "OL"); longer text is not a reading.

Bounded input keeps every output bounded too: the job sheet PDF of the largest job is a
fixed number of pages.
"""

MAX_OUTLETS_PER_CIRCUIT = 60
MAX_CIRCUITS_PER_JOB = 24
MAX_OUTLETS_PER_JOB = 400
MAX_NOTES_CHARS = 4000
MAX_DOCUMENT_BYTES = 1_000_000
MAX_CONTENT_LENGTH = 1_200_000
MAX_READING_CHARS = 32
