"""Configuration from the environment.

DATABASE_URL: any SQLAlchemy URL; default a SQLite file in the instance folder.
SECRET_KEY: session signing key; when unset a random key is generated once into the instance
folder (fine for a single development machine, set it explicitly anywhere else).
FIELDAPP_HTTPS=1: served over HTTPS (Secure cookies, HSTS). FIELDAPP_PROXY_HOPS=N: N reverse
proxies in front whose X-Forwarded-* headers are trusted (fieldapp/security.py).
FIELDAPP_LOG_LEVEL: DEBUG, INFO (default), WARNING, ...
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

from fieldapp import limits
from fieldapp.security import https_config

SQLITE_FILE = "fieldapp.sqlite"
SECRET_FILE = "secret_key"


def database_url(instance_path: str) -> str:
    """DATABASE_URL with the driver made explicit, or the default SQLite file."""
    url = os.environ.get("DATABASE_URL", "").strip()
    if not url:
        return f"sqlite:///{Path(instance_path) / SQLITE_FILE}"
    # psycopg (version 3) is the driver we ship; plain postgres URLs would ask for psycopg2.
    for prefix in ("postgres://", "postgresql://"):
        if url.startswith(prefix):
            return "postgresql+psycopg://" + url[len(prefix):]
    return url


def secret_key(instance_path: str) -> str:
    """SECRET_KEY from the environment, else the instance folder's generated key."""
    key = os.environ.get("SECRET_KEY", "").strip()
    if key:
        return key
    path = Path(instance_path) / SECRET_FILE
    if path.exists():
        return path.read_text().strip()
    key = secrets.token_hex(32)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    with os.fdopen(fd, "w") as fh:
        fh.write(key)
    return key


def _flag(name: str) -> bool:
    return os.environ.get(name, "").strip().lower() in ("1", "true", "yes", "on")


def base_config(instance_path: str) -> dict:
    """The settings every app starts from; create_app(config) overrides them."""
    hops = os.environ.get("FIELDAPP_PROXY_HOPS", "").strip()
    return {
        **https_config(_flag("FIELDAPP_HTTPS")),
        "PROXY_HOPS": int(hops) if hops.isdigit() else 0,
        "LOG_LEVEL": os.environ.get("FIELDAPP_LOG_LEVEL") or "INFO",
        "MAX_CONTENT_LENGTH": limits.MAX_CONTENT_LENGTH,
        "MAX_FORM_MEMORY_SIZE": limits.MAX_CONTENT_LENGTH,
        "SQLALCHEMY_DATABASE_URI": database_url(instance_path),
        "SQLALCHEMY_ENGINE_OPTIONS": {"pool_pre_ping": True},
        "SESSION_COOKIE_HTTPONLY": True,
        "SESSION_COOKIE_SAMESITE": "Lax",
        "REMEMBER_COOKIE_SAMESITE": "Lax",
        "WTF_CSRF_TIME_LIMIT": None,  # a long day on site must not expire the form
        "DEMO_PASSWORD": os.environ.get("FIELDAPP_DEMO_PASSWORD") or None,
        # where the full diagnosis runs after a save (fieldapp/background.py)
        "DIAGNOSIS_MODE": os.environ.get("FIELDAPP_DIAGNOSIS", "background").strip(),
    }
