"""Security headers, HTTPS behind a proxy, and the SQLite settings for several writers.

Headers on every response: a Content-Security-Policy that allows scripts, styles, images,
the manifest and the service worker from this site only (no inline script or style, no
framing), ``X-Content-Type-Options: nosniff``, ``Referrer-Policy: same-origin``,
``X-Frame-Options: DENY`` for old browsers. With ``FIELDAPP_HTTPS=1`` (config ``HTTPS``) the
session and remember cookies are ``Secure`` and HTTPS responses carry HSTS.

Behind a reverse proxy that ends TLS, set ``FIELDAPP_PROXY_HOPS`` to the number of proxies
(usually 1): werkzeug's ProxyFix then trusts that many ``X-Forwarded-For/-Proto/-Host``
headers, so ``request.is_secure``, the client address used by the sign-in limits and the
URLs the app builds are the real ones. Never set it when clients reach the app directly:
they could then forge their address.
"""

from __future__ import annotations

from flask import Flask, request
from sqlalchemy import event
from werkzeug.middleware.proxy_fix import ProxyFix

CSP = "; ".join((
    "default-src 'self'",
    "script-src 'self'",
    "style-src 'self'",
    "img-src 'self' data:",
    "font-src 'self'",
    "connect-src 'self'",
    "manifest-src 'self'",
    "worker-src 'self'",
    "object-src 'none'",
    "base-uri 'none'",
    "form-action 'self'",
    "frame-ancestors 'none'",
))
HSTS = "max-age=31536000; includeSubDomains"
#: How long a SQLite writer waits for the lock before "database is locked", in seconds.
SQLITE_BUSY_SECONDS = 20


def https_config(enabled: bool) -> dict:
    """Cookie settings for a site served over HTTPS."""
    return {"HTTPS": enabled, "SESSION_COOKIE_SECURE": enabled,
            "REMEMBER_COOKIE_SECURE": enabled, "PREFERRED_URL_SCHEME":
            "https" if enabled else "http"}


def add_headers(response):
    headers = response.headers
    headers.setdefault("Content-Security-Policy", CSP)
    headers.setdefault("X-Content-Type-Options", "nosniff")
    headers.setdefault("X-Frame-Options", "DENY")
    headers.setdefault("Referrer-Policy", "same-origin")
    if request.is_secure:
        headers.setdefault("Strict-Transport-Security", HSTS)
    return response


def install(app: Flask) -> None:
    """Headers on every response; ProxyFix when the config names proxy hops."""
    app.after_request(add_headers)
    hops = int(app.config.get("PROXY_HOPS") or 0)
    if hops > 0:
        # Flask's documented way to add WSGI middleware; its stubs declare wsgi_app a method
        app.wsgi_app = ProxyFix(  # type: ignore[method-assign]
            app.wsgi_app, x_for=hops, x_proto=hops, x_host=hops, x_port=hops, x_prefix=hops)


def _sqlite_pragmas(dbapi_connection, _record) -> None:
    cursor = dbapi_connection.cursor()
    cursor.execute("PRAGMA journal_mode=WAL")  # readers never wait for a writer
    cursor.execute(f"PRAGMA busy_timeout={SQLITE_BUSY_SECONDS * 1000}")
    cursor.execute("PRAGMA synchronous=NORMAL")  # safe with WAL; a commit is one fsync less
    cursor.close()


def tune_sqlite(engine) -> None:
    """WAL mode and a busy timeout on every new SQLite connection (other databases: no-op)."""
    if engine.dialect.name == "sqlite":
        event.listen(engine, "connect", _sqlite_pragmas)
