"""SVG drawings for the ring test: what to connect, the inferred ring, and the readings.

Pure functions from plain values (the dicts and lists of ``ringmath.diagnose``'s output, see
DEVELOPERS.md) to SVG markup. Every piece of text from a record is escaped, so the result can be
embedded inline in a page (it is returned as ``markupsafe.Markup``) or in a PDF.

The drawings are made for a phone first (``viewBox`` 360 units wide, ``width="100%"``, text of
at least 11 units) and for black-and-white print: no meaning rests on colour alone. Conductors
carry their text name and a line style (line solid, neutral dashed, CPC striped) beside the
harmonised core colours; suspect points carry a shape, a dashed halo and words.

Modules: ``svg`` (small element helpers, colours), ``connections`` (what to join for each
step), ``layout`` (ring order and placement), ``key`` (point symbols and the key under a
drawing), ``ring`` (the ring picture), ``plot`` (the readings plot).
"""

from fieldapp.drawings.connections import connection_diagram
from fieldapp.drawings.layout import order_known, point_names, ring_positions
from fieldapp.drawings.plot import readings_plot
from fieldapp.drawings.ring import FAULT_WORDS, ring_picture
from fieldapp.drawings.svg import ALERT, BAND_FILL, CORES, INK, MUTED, WIDTH
from fieldapp.labels import KIND_WORDS

__all__ = [
    "ALERT", "BAND_FILL", "CORES", "FAULT_WORDS", "INK", "KIND_WORDS", "MUTED", "WIDTH",
    "connection_diagram", "order_known", "point_names", "readings_plot",
    "ring_picture", "ring_positions",
]
