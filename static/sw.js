/* Ring test service worker: the app shell and visited pages, for use on site without signal.
 *
 * - install: caches the shell (stylesheet, scripts, manifest, favicon, the offline page);
 * - activate: deletes every cache that is not one of this version's two (this origin's caches
 *   are all ours, whatever name an older version gave them) and takes control of open pages;
 * - pages (navigations): network first; offline, the copy of the last visit, else the
 *   offline page. Pages are sent "no-store" so the browser's own caches never hold job data;
 *   this worker keeps its own copies for offline use, per user: cleared at logout and when
 *   another user signs in on the phone;
 * - static files under /static/: cache first, fetched and kept when missing;
 * - anything else (POSTs, the JSON API): straight to the network;
 * - Background Sync "ringtest-outbox": sends the outbox (static/js/replay.js), also when no
 *   page of the app is open.
 * Bump VERSION whenever a file of the shell changes.
 */
"use strict";

importScripts("/static/js/util.js", "/static/js/outbox.js", "/static/js/replay.js");

const VERSION = "ringtest-v18";
const SHELL_CACHE = VERSION + "-shell";
const PAGE_CACHE = VERSION + "-pages";
const OFFLINE_PAGE = "/static/offline.html";
/* Install fails without these two: offline, a page without its stylesheet is unusable. */
const REQUIRED = [OFFLINE_PAGE, "/static/app.css"];
const OPTIONAL = [
  "/static/js/util.js",
  "/static/js/outbox.js",
  "/static/js/replay.js",
  "/static/js/status.js",
  "/static/js/overlay.js",
  "/static/js/forms.js",
  "/static/js/slip.js",
  "/static/js/app.js",
  "/static/js/updating.js",
  "/static/js/boot.js",
  "/static/manifest.webmanifest",  // sheet.js: kept on first use (job pages only)
  "/static/icons/icon.svg",
];

/* The first install takes the files the page has just loaded from the browser's cache (no
 * second download, not even a revalidation); a new version asks the server for each file. */
self.addEventListener("install", (event) => {
  event.waitUntil((async () => {
    const first = !(await caches.keys()).some((name) => name.endsWith("-shell"));
    const mode = first ? "force-cache" : "no-cache";
    const get = (url) => new Request(url, { cache: mode, credentials: "same-origin" });
    const cache = await caches.open(SHELL_CACHE);
    await cache.addAll(REQUIRED.map(get));
    await Promise.all(OPTIONAL.map((url) => cache.add(get(url)).catch(() => undefined)));
    await self.skipWaiting();
  })());
});

self.addEventListener("activate", (event) => {
  event.waitUntil((async () => {
    const current = [SHELL_CACHE, PAGE_CACHE];
    const names = await caches.keys();
    await Promise.all(names.filter((name) => !current.includes(name))
      .map((name) => caches.delete(name)));
    await self.clients.claim();
  })());
});

function isLogin(url) {
  return /\/login\/?$/.test(new URL(url, self.location.origin).pathname);
}

/* Messages from the pages, handled one after another:
 * - "keep-page" {url, html}: the first page a phone opens went past this worker; the page
 *   hands over its own copy (no second download). Never the login page.
 * - "keep-missing" {urls}: pages the phone may need offline (a circuit's other steps),
 *   fetched only when no copy is kept yet;
 * - "clear-pages": logout, or another user signed in: the next user of a shared phone does
 *   not see the last one's jobs offline. */
let queue = Promise.resolve();

self.addEventListener("message", (event) => {
  const data = event.data || {};
  const work = async () => {
    if (data.type === "clear-pages") {
      await caches.delete(PAGE_CACHE);
    } else if (data.type === "keep-missing" && Array.isArray(data.urls)) {
      await keepMissing(data.urls);
    } else if (data.type === "keep-page" && typeof data.url === "string" &&
               typeof data.html === "string") {
      const url = new URL(data.url, self.location.origin);
      if (url.origin !== self.location.origin || isLogin(url.href)) return;
      url.hash = "";
      const cache = await caches.open(PAGE_CACHE);
      await cache.put(url.href, new Response(data.html, {
        headers: { "Content-Type": "text/html; charset=utf-8" },
      }));
    }
  };
  queue = queue.then(work).catch(() => undefined);
  event.waitUntil(queue);
});

/* Fetch and keep the pages not kept yet (same origin, never the login page). */
async function keepMissing(urls) {
  const cache = await caches.open(PAGE_CACHE);
  for (const raw of urls.slice(0, 4)) {
    const url = new URL(raw, self.location.origin);
    if (url.origin !== self.location.origin || isLogin(url.href)) continue;
    if (await cache.match(url.href)) continue;
    try {
      const response = await fetch(url.href, { credentials: "same-origin" });
      if (keepable(response) && !response.redirected) await cache.put(url.href, response);
    } catch (error) {
      return;  // offline again: try another time
    }
  }
}

self.addEventListener("sync", (event) => {
  if (event.tag === "ringtest-outbox") event.waitUntil(self.RT.replay.run());
});

function keepable(response) {
  if (!response || !response.ok || response.type !== "basic") return false;
  const type = response.headers.get("Content-Type") || "";
  return type.startsWith("text/html") && !isLogin(response.url);
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
    if (keepable(response)) {
      const copy = await plain(response.clone());
      const cache = await caches.open(PAGE_CACHE);
      await cache.put(request, copy.clone());
      if (response.redirected) await cache.put(response.url, copy.clone());
      return copy;
    }
    return response;
  } catch (error) {
    const cached = await caches.match(request, { ignoreVary: true, cacheName: PAGE_CACHE });
    if (cached) return cached;
    const fallback = await caches.match(OFFLINE_PAGE);
    if (fallback) return fallback;
    throw error;
  }
}

async function staticCacheFirst(request) {
  const cached = await caches.match(request, { cacheName: SHELL_CACHE });
  if (cached) return cached;
  const response = await fetch(request);
  if (response.ok && response.type === "basic") {
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
