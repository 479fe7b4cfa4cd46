"""Logging for the app, set up once by the factory.

Records go to stderr (gunicorn and systemd keep them) as one line each: time, level, logger,
message. ``FIELDAPP_LOG_LEVEL`` (config ``LOG_LEVEL``) sets the level, INFO by default. The
app logs each refused write (fieldapp.changes), each diagnosis that fails (fieldapp.records),
failed and refused sign-ins (fieldapp.auth) and every unexpected error with its traceback.
"""

from __future__ import annotations

import logging

FORMAT = "%(asctime)s %(levelname)s %(name)s: %(message)s"
_HANDLER_NAME = "fieldapp-stderr"


def setup(level: str | int = "INFO") -> logging.Logger:
    """The "fieldapp" logger with one stderr handler (idempotent: safe for many apps)."""
    logger = logging.getLogger("fieldapp")
    logger.setLevel(level if isinstance(level, int) else str(level).upper())
    if not any(h.get_name() == _HANDLER_NAME for h in logger.handlers):
        handler = logging.StreamHandler()
        handler.set_name(_HANDLER_NAME)
        handler.setFormatter(logging.Formatter(FORMAT))
        logger.addHandler(handler)
    return logger
