"""The offline pieces as files: manifest, icons, service worker shell list (no browser needed)."""

from __future__ import annotations

import importlib.util
import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from PIL import Image, ImageChops

ROOT = Path(__file__).resolve().parents[2]
STATIC = ROOT / "static"
MANIFEST = json.loads((STATIC / "manifest.webmanifest").read_text(encoding="utf-8"))


def draw_icons():
    spec = importlib.util.spec_from_file_location("draw_icons", STATIC / "icons" / "draw_icons.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_manifest_installs_as_a_standalone_app():
    # members and values from the W3C Web Application Manifest specification
    assert MANIFEST["name"].startswith("Ring test")
    assert MANIFEST["short_name"] == "Ring test" and len(MANIFEST["short_name"]) <= 12
    assert MANIFEST["start_url"] == "/" and MANIFEST["scope"] == "/"
    assert MANIFEST["display"] == "standalone"
    assert "does not certify" in MANIFEST["description"]


def test_manifest_theme_colour_matches_the_pages():
    base = (ROOT / "templates" / "base.html").read_text(encoding="utf-8")
    meta = re.search(r'<meta name="theme-color" content="(#[0-9a-fA-F]{6})"', base)
    assert meta, "base.html carries a theme-color meta tag"
    assert MANIFEST["theme_color"].lower() == meta.group(1).lower()
    assert draw_icons().BACKGROUND.lower() == meta.group(1).lower()


@pytest.mark.parametrize("icon", MANIFEST["icons"], ids=lambda i: i["src"])
def test_every_manifest_icon_exists_at_its_stated_size(icon):
    path = ROOT / icon["src"].lstrip("/")
    assert path.is_file()
    if icon["type"] == "image/svg+xml":
        root = ET.parse(path).getroot()
        assert root.tag == "{http://www.w3.org/2000/svg}svg"
        assert icon["sizes"] == "any"
    else:
        with Image.open(path) as image:
            assert image.format == "PNG"
            assert f"{image.width}x{image.height}" == icon["sizes"]


def test_manifest_has_the_icon_sizes_browsers_ask_for():
    # 192 px and 512 px PNGs are what Chromium's install criteria look for (from memory)
    sizes = {(i["sizes"], i.get("purpose", "any")) for i in MANIFEST["icons"]
             if i["type"] == "image/png"}
    assert {("192x192", "any"), ("512x512", "any"), ("512x512", "maskable")} <= sizes


def test_maskable_icon_keeps_its_picture_in_the_safe_zone():
    # maskable icons: everything that matters inside a centred circle of radius 40 % of the
    # icon size (W3C Web Application Manifest, "icon masks" / safe zone)
    with Image.open(STATIC / "icons" / "maskable-512.png") as image:
        rgb = image.convert("RGB")
    background = rgb.getpixel((0, 0))
    size = rgb.width
    radius = 0.4 * size
    outside = 0
    for y in range(0, size, 4):
        for x in range(0, size, 4):
            if (x - size / 2) ** 2 + (y - size / 2) ** 2 > radius ** 2:
                pixel = rgb.getpixel((x, y))
                outside += max(abs(a - b) for a, b in zip(pixel, background, strict=True)) > 24
    assert outside == 0
    assert rgb.getpixel((size // 2, size // 4)) != background  # the drawing is there


def test_committed_icons_are_what_the_drawing_script_makes():
    module = draw_icons()
    assert (STATIC / "icons" / "icon.svg").read_text(encoding="utf-8") == module.svg()
    for name, (size, maskable) in module.OUTPUTS.items():
        with Image.open(STATIC / "icons" / name) as committed:
            fresh = module.png(size, maskable=maskable)
            difference = ImageChops.difference(committed.convert("RGBA"), fresh.convert("RGBA"))
            assert max(hi for _, hi in difference.getextrema()) <= 2, name


SW = (STATIC / "sw.js").read_text(encoding="utf-8")


def shell_urls() -> list[str]:
    block = re.search(r"const REQUIRED = \[(.*?)\];.*?const OPTIONAL = \[(.*?)\];", SW, re.S)
    urls = re.findall(r'"(/static/[^"]+)"', block.group(1) + block.group(2))
    constants = dict(re.findall(r'const (\w+) = "(/static/[^"]+)";', SW))
    urls += [constants[name] for name in re.findall(r"\b([A-Z_]+)\b", block.group(1))
             if name in constants]
    return urls


def test_service_worker_shell_lists_files_that_exist():
    urls = shell_urls()
    for required in ("/static/offline.html", "/static/app.css", "/static/js/outbox.js",
                     "/static/js/replay.js", "/static/manifest.webmanifest",
                     "/static/icons/icon.svg"):
        assert required in urls
    for url in urls:
        assert (ROOT / url.lstrip("/")).is_file(), url


def test_service_worker_cache_names_are_versioned():
    version = re.search(r'const VERSION = "(ringtest-v\d+)";', SW)
    assert version
    assert 'VERSION + "-shell"' in SW and 'VERSION + "-pages"' in SW
    assert "caches.delete(name)" in SW  # old versions go on activate
    # every script a page loads is in the shell, and the worker loads its own from there
    base = (ROOT / "templates" / "base.html").read_text(encoding="utf-8")
    names = re.search(r"{% for name in \(([^)]*)\) %}", base).group(1)
    for name in re.findall(r"'(\w+)'", names):
        assert f'"/static/js/{name}.js"' in SW, name
    for url in re.findall(r'importScripts\(([^)]*)\)', SW)[0].split(","):
        assert url.strip().strip('"') in shell_urls()


def test_one_service_worker_registration_and_no_weak_ids():
    scripts = {p.name: p.read_text(encoding="utf-8") for p in (STATIC / "js").glob("*.js")}
    assert [n for n, text in scripts.items() if '"/sw.js"' in text] == ["boot.js"]
    assert scripts["boot.js"].count(".register(") == 1
    assert [n for n, text in scripts.items() if "Math.random" in text] == []
    assert [n for n, text in scripts.items() if "randomUUID" in text] == ["util.js"]
    assert [n for n, text in scripts.items() if "csrf-token" in text] == ["util.js"]
    assert [n for n, text in scripts.items() if "localStorage.getItem(key)" in text] == []
    for name, text in scripts.items():
        assert len(text.splitlines()) <= 300, name


def test_pages_carry_no_inline_script():
    for path in [*(ROOT / "templates").rglob("*.html"), STATIC / "offline.html"]:
        html = path.read_text(encoding="utf-8")
        assert not re.search(r"<script(?![^>]*\bsrc=)[^>]*>", html), path


def test_offline_page_carries_the_caution_and_no_remote_assets():
    html = (STATIC / "offline.html").read_text(encoding="utf-8")
    assert '<html lang="en-GB">' in html
    assert "does not certify" in html and "proved dead" in html
    assert not re.search(r'(src|href)="(https?:)?//', html)


def test_icons_are_small_palette_images():
    # simple drawings of four colours: palette PNGs, a few kilobytes each
    total = 0
    for name in draw_icons().OUTPUTS:
        path = STATIC / "icons" / name
        with Image.open(path) as image:
            assert image.mode == "P", name
        total += path.stat().st_size
    assert total < 20_000
