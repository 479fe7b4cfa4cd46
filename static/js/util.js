/* Helpers every script uses, in the pages and in the service worker: one place each.
 *   RT.util.newClientId()   an id made on this phone (crypto.randomUUID / getRandomValues)
 *   RT.util.csrfToken(doc)  the page's CSRF token (meta csrf-token)
 *   RT.util.deviceLabel()   what the change log records as the device
 *   RT.util.pageUser()      {id, name} of the user the page was made for, or null
 *   RT.util.clock(date)     "14:32" today, "1 Dec 14:32" another day (phone's local time)
 *   RT.util.ohm(value)      "0.27 Ω" or "OL"
 *   RT.util.bandNote(card, value)  " Within the expected 0.30 to 0.42 Ω." from the card's band
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};

  /* Reading names as the trade writes them. */
  var NAMES = { r1: "r1", rn: "rn", r2: "r2", ln: "L–N", le: "L–CPC" };

  function newClientId() {
    var c = root.crypto;
    if (c && typeof c.randomUUID === "function") return c.randomUUID();
    var b = new Uint8Array(16);
    c.getRandomValues(b); // no crypto at all: fail loudly, never a guessable id
    b[6] = (b[6] & 0x0f) | 0x40;
    b[8] = (b[8] & 0x3f) | 0x80;
    var h = Array.prototype.map.call(b, function (x) { return ("0" + x.toString(16)).slice(-2); })
      .join("");
    return h.slice(0, 8) + "-" + h.slice(8, 12) + "-" + h.slice(12, 16) + "-" +
      h.slice(16, 20) + "-" + h.slice(20);
  }

  function csrfToken(doc) {
    var d = doc || root.document;
    var meta = d && d.querySelector('meta[name="csrf-token"]');
    return meta ? meta.getAttribute("content") : "";
  }

  function deviceLabel() {
    try {
      return root.localStorage.getItem("ringtest-device") || root.navigator.userAgent;
    } catch (e) {
      return root.navigator.userAgent;
    }
  }

  function pageUser() {
    var body = root.document && root.document.body;
    var id = body && body.getAttribute("data-user");
    return id ? { id: Number(id), name: body.getAttribute("data-user-name") || "" } : null;
  }

  function two(n) { return ("0" + n).slice(-2); }

  var MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov",
    "Dec"];

  function clock(value) {
    var d = value instanceof Date ? value : new Date(value);
    if (isNaN(d.getTime())) return "";
    var hm = two(d.getHours()) + ":" + two(d.getMinutes());
    var now = new Date();
    if (d.toDateString() === now.toDateString()) return hm;
    return d.getDate() + " " + MONTHS[d.getMonth()] + " " + hm;
  }

  function ohm(value) {
    if (value === "OL") return "OL";
    var n = Number(String(value).replace(",", "."));
    return isFinite(n) ? n.toFixed(2) + " Ω" : String(value);
  }

  /* Offline there is no diagnosis, but a reading's card carries the band the server last gave
   * for it (data-low / data-high): whether a value is in it, in words ("" when no band). */
  function bandNote(card, value) {
    var low = parseFloat(card.getAttribute("data-low"));
    var high = parseFloat(card.getAttribute("data-high"));
    if (!isFinite(low) || !isFinite(high)) return "";
    var band = low.toFixed(2) + " to " + high.toFixed(2) + " Ω";
    if (value === "OL") return " OL where " + band + " was expected: check the probe contact and the board joins.";
    var n = parseFloat(String(value).replace(",", "."));
    if (!isFinite(n)) return "";
    if (n < low) return " Below the expected " + band + ": check before moving on.";
    if (n > high) return " Above the expected " + band + ": check before moving on.";
    return " Within the expected " + band + ".";
  }

  function count(n, one, many) {
    return n + " " + (n === 1 ? one : many);
  }

  RT.util = {
    NAMES: NAMES, newClientId: newClientId, csrfToken: csrfToken, deviceLabel: deviceLabel,
    pageUser: pageUser, clock: clock, ohm: ohm, count: count, bandNote: bandNote,
  };
})(self);
