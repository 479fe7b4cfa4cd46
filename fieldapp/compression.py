"""Compressed responses: pages and JSON with flask-compress (quick settings, made per request),
static files with Brotli at its best setting, made once per file version and kept in memory
(the files are the same for everyone; a phone downloads them once, its worker keeps them).
"""

from __future__ import annotations

import brotli
from flask import Flask, Response, request
from flask_compress import Compress

#: Brotli's best quality: slow to make, fast to read; worth it for files made once.
STATIC_QUALITY = 11
#: (path, ETag) -> compressed bytes; a changed file has a new ETag.
_made: dict[tuple[str, str], bytes] = {}
#: What is worth compressing among the static files (PNG icons are compressed already).
STATIC_TYPES = frozenset({"text/css", "text/javascript", "application/javascript",
                          "application/manifest+json", "image/svg+xml", "text/html"})


def static_brotli(response: Response) -> Response:
    """A static file's 200 as Brotli when the browser takes it (then 304 on a match)."""
    if response.status_code != 200 or "br" not in request.headers.get("Accept-Encoding", ""):
        return response
    etag, weak = response.get_etag()
    if not etag or weak or response.mimetype not in STATIC_TYPES:
        return response
    key = (request.path, etag)
    body = _made.get(key)
    if body is None:
        body = brotli.compress(response.get_data(), quality=STATIC_QUALITY)
        if len(_made) > 200:  # a bound: the app has a few dozen static files
            _made.clear()
        _made[key] = body
    response.set_data(body)
    response.headers["Content-Encoding"] = "br"
    response.headers["Vary"] = "Accept-Encoding"
    response.set_etag(f"{etag}-br")
    response.make_conditional(request)  # werkzeug types its result as its own Response
    return response


def install(app: Flask) -> None:
    """flask-compress for every response not compressed yet (Brotli first, then zstd, gzip)."""
    app.config.setdefault("COMPRESS_MIN_SIZE", 500)
    app.config.setdefault("COMPRESS_STREAMS", False)
    app.config.setdefault("COMPRESS_ALGORITHM", ["br", "zstd", "gzip", "deflate"])
    Compress(app)
