"""The protective devices the app knows: the circuit form offers them and an import refuses
any other (fieldapp/transfer/schemas.py). A plain module, so that both can import it without
loading a blueprint."""

OCPD_STANDARDS = (
    ("BS EN 60898", "BS EN 60898 circuit-breaker (MCB)"),
    ("BS EN 61009", "BS EN 61009 RCBO"),
    ("BS 88-3", "BS 88-3 cartridge fuse"),
    ("BS 3036", "BS 3036 rewirable fuse"),
    ("BS 1362", "BS 1362 plug-top/FCU fuse"),
)
BREAKER_STANDARDS = ("BS EN 60898", "BS EN 61009")
CURVES = (("", "none (fuse)"), ("B", "B"), ("C", "C"), ("D", "D"))
RATINGS_A = (3, 5, 6, 10, 13, 15, 16, 20, 25, 30, 32, 40, 45, 50, 63)
RCD_MA = (("", "no RCD"), ("10", "10 mA"), ("30", "30 mA"), ("100", "100 mA"),
          ("300", "300 mA"))
RCD_TYPES = (("", "—"), ("AC", "AC"), ("A", "A"), ("F", "F"), ("B", "B"))
