/* Ring test service worker: the app shell and visited pages, for use on site without signal.
 *
 * - install: caches the shell (stylesheet, scripts, manifest, icons, the offline page);
 * - activate: deletes caches of older versions and takes control of open pages (which ask
 *   for their own page to be kept, see "keep-page");
 * - pages (navigations): network first, the copy of the last visit when offline, else the
 *   offline page;
 * - static files under /static/: cache first, fetched and kept when missing;
 * - anything else (POSTs, the JSON API): straight to the network.
 * Bump VERSION whenever the shell changes.
 */
"use strict";

const VERSION = "ringtest-v6";
const SHELL_CACHE = VERSION + "-shell";
const PAGE_CACHE = VERSION + "-pages";
const OFFLINE_PAGE = "/static/offline.html";
/* Install fails without these two: offline, a page without its stylesheet is unusable. */
const REQUIRED = [OFFLINE_PAGE, "/static/app.css"];
const OPTIONAL = [
  "/static/js/app.js",
  "/static/js/offline.js",
  "/static/manifest.webmanifest",
  "/static/icons/icon.svg",
  "/static/icons/icon-192.png",
  "/static/icons/icon-512.png",
  "/static/icons/maskable-512.png",
];

self.addEventListener("install", (event) => {
  event.waitUntil((async () => {
    const cache = await caches.open(SHELL_CACHE);
    await cache.addAll(REQUIRED);
    await Promise.all(OPTIONAL.map((url) => cache.add(url).catch(() => undefined)));
    await self.skipWaiting();
  })());
});

self.addEventListener("activate", (event) => {
  event.waitUntil((async () => {
    const names = await caches.keys();
    await Promise.all(names
      .filter((name) => name.startsWith("ringtest-") && !name.startsWith(VERSION + "-"))
      .map((name) => caches.delete(name)));
    await self.clients.claim();
  })());
});

/* Messages from the pages:
 * - "keep-page" {url}: the page that was open when this worker took control went past it;
 *   fetch and keep it so that the first visit opens offline too (not the login page);
 * - "clear-pages" on logout, so the next user of a shared phone does not see the last one's
 *   jobs offline. */
self.addEventListener("message", (event) => {
  const data = event.data || {};
  if (data.type === "clear-pages") {
    event.waitUntil(caches.delete(PAGE_CACHE));
  } else if (data.type === "keep-page" && typeof data.url === "string") {
    const url = new URL(data.url, self.location.origin);
    // Never fetch the login page behind the user's back: its response carries a session
    // cookie that would overwrite the one the login itself is setting at the same moment.
    if (url.origin !== self.location.origin || /\/login\/?$/.test(url.pathname)) return;
    url.hash = "";
    event.waitUntil(keepPage(url.href).catch(() => undefined));
  }
});

async function keepPage(url) {
  const response = await fetch(url, { credentials: "same-origin" });
  if (storable(response) && !response.redirected) {
    const cache = await caches.open(PAGE_CACHE);
    await cache.put(url, response);
  }
}

function storable(response) {
  if (!response || !response.ok || response.type !== "basic") return false;
  const control = response.headers.get("Cache-Control") || "";
  return !/no-store/i.test(control);
}

/* A response that came through redirects cannot answer a navigation from the cache as it is;
 * copy it into a plain one first. */
async function plain(response) {
  if (!response.redirected) return response;
  const body = await response.blob();
  return new Response(body, {
    status: response.status,
    statusText: response.statusText,
    headers: response.headers,
  });
}

async function pageNetworkFirst(request) {
  try {
    const response = await fetch(request);
    if (storable(response)) {
      const copy = await plain(response.clone());
      const cache = await caches.open(PAGE_CACHE);
      await cache.put(request, copy.clone());
      if (response.redirected) await cache.put(response.url, copy.clone());
      return copy;
    }
    return response;
  } catch (error) {
    const cached = await caches.match(request, { ignoreVary: true });
    if (cached) return cached;
    const fallback = await caches.match(OFFLINE_PAGE);
    if (fallback) return fallback;
    throw error;
  }
}

async function staticCacheFirst(request) {
  const cached = await caches.match(request);
  if (cached) return cached;
  const response = await fetch(request);
  if (storable(response)) {
    const cache = await caches.open(SHELL_CACHE);
    await cache.put(request, response.clone());
  }
  return response;
}

self.addEventListener("fetch", (event) => {
  const request = event.request;
  if (request.method !== "GET") return;
  const url = new URL(request.url);
  if (url.origin !== self.location.origin) return;
  if (request.mode === "navigate") {
    event.respondWith(pageNetworkFirst(request));
  } else if (url.pathname.startsWith("/static/")) {
    event.respondWith(staticCacheFirst(request));
  }
});
