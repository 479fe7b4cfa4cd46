/* A step page shows what the phone knows: the last copy the server gave, plus what was sent
 * since that copy was made, plus every item still waiting in the outbox, with a plain
 * "As of 14:32, 3 readings waiting." line when the page is a kept copy, offline or behind.
 *
 * The page's readings section carries data-circuit, data-job, data-step, data-as-of (when
 * the server made the page, UTC) and data-api / data-save (the reading endpoints).
 *   RT.overlay.apply(items)            bring the cards up to date from the outbox
 *   RT.overlay.outletCard(outlet)      a card for an outlet (a new one has only a client key)
 *   RT.overlay.findCard(field, key, clientKey)
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var util = RT.util;
  var STEP_FIELDS = { e2e: ["r1", "rn", "r2"], ln: ["ln"], le: ["le"] };
  var KINDS = { twin_socket: "Twin socket", single_socket: "Single socket",
    fcu: "Fused connection unit (FCU)", junction_box: "Junction box",
    fixed_equipment: "Fixed equipment (no plug)" };
  /* A copy made longer ago than this before the page was opened is an old copy. */
  var OLD_COPY_MS = 120 * 1000;

  function section() { return document.querySelector("section.readings[data-circuit]"); }

  function page() {
    var s = section();
    if (!s) return null;
    return { el: s, circuitId: Number(s.getAttribute("data-circuit")),
      jobId: Number(s.getAttribute("data-job")), step: s.getAttribute("data-step"),
      asOf: s.getAttribute("data-as-of"), api: s.getAttribute("data-api"),
      save: s.getAttribute("data-save"), writable: s.getAttribute("data-writable") === "1" };
  }

  function findCard(field, key, clientKey) {
    var s = section();
    if (!s) return null;
    if (clientKey) {
      var byClient = s.querySelector('article[data-field="' + field + '"][data-client-key="' + clientKey + '"]');
      if (byClient) return byClient;
    }
    if (key == null && clientKey) return null;
    return s.querySelector('article[data-field="' + field + '"][data-outlet="' + (key || "") + '"]');
  }

  function el(tag, attrs, textValue) {
    var e = document.createElement(tag);
    Object.keys(attrs || {}).forEach(function (k) {
      if (attrs[k] !== null && attrs[k] !== undefined) e.setAttribute(k, attrs[k]);
    });
    if (textValue) e.textContent = textValue;
    return e;
  }

  function title(outlet) {
    return (outlet.key || "new") + " · " + (outlet.label || KINDS[outlet.kind] || "outlet") +
      (outlet.key ? "" : " (added on this phone)");
  }

  /* A reading card for an outlet, as the server draws one (see ringtest/step.html). */
  function outletCard(outlet) {
    var p = page();
    var field = p.step;
    var anchor = outlet.key ? "r-" + field + "-" + outlet.key
      : "r-" + field + "-new-" + outlet.clientKey.slice(0, 8);
    var card = el("article", { "class": "reading pending", id: anchor, "data-field": field,
      "data-outlet": outlet.key || "", "data-client-key": outlet.clientKey || null });
    card.appendChild(el("h3", null, title(outlet)));
    var hint = [KINDS[outlet.kind] || outlet.kind];
    if (outlet.spurFrom) hint.push("spur from " + outlet.spurFrom);
    card.appendChild(el("p", { "class": "hint" }, hint.join(", ")));
    var now = el("p", { "class": "now", hidden: "" }, "Recorded: ");
    now.appendChild(el("strong", { "class": "value", "data-value": "" }));
    card.appendChild(now);
    card.appendChild(el("div", { "class": "feedback", "data-feedback": "" }));
    if (p.writable) {
      var form = el("form", { method: "post", action: p.save, "class": "reading-form",
        "data-api": p.api, novalidate: "" });
      [["csrf_token", util.csrfToken()], ["field", field], ["outlet", outlet.key || ""],
        ["client_id", util.newClientId()], ["device", util.deviceLabel()]].forEach(function (f) {
        form.appendChild(el("input", { type: "hidden", name: f[0], value: f[1] }));
      });
      form.appendChild(el("label", { "for": "v-" + anchor }, "Reading (Ω)"));
      var entry = el("div", { "class": "entry" });
      entry.appendChild(el("input", { id: "v-" + anchor, name: "value", type: "text",
        "class": "big", inputmode: "decimal", autocomplete: "off", enterkeyhint: "send",
        spellcheck: "false", "aria-invalid": "false" }));
      entry.appendChild(el("input", { type: "submit", name: "save", value: "Save",
        "class": "button primary", id: "s-" + anchor }));
      entry.appendChild(el("input", { type: "submit", name: "ol", value: "OL",
        "class": "button ol", id: "o-" + anchor, title: "Meter shows OL (open / over range)" }));
      form.appendChild(entry);
      form.appendChild(el("p", { "class": "error js-error", role: "alert", hidden: "" }));
      card.appendChild(form);
    }
    p.el.appendChild(card);
    var empty = p.el.querySelector("p.lead");
    if (empty) empty.hidden = true;
    document.dispatchEvent(new CustomEvent("ringtest:card", { detail: card }));
    return card;
  }

  /* The outlet's card now has its server key: id, title and form follow. */
  function adoptKey(card, key, label) {
    var field = card.getAttribute("data-field");
    var old = card.id;
    card.setAttribute("data-outlet", key);
    card.id = "r-" + field + "-" + key;
    card.querySelectorAll("[id], label[for]").forEach(function (e) {  // v-, s-, o-, rn- ids
      if (e.id && e.id.indexOf(old) >= 0) e.id = e.id.replace(old, card.id);
      var f = e.getAttribute("for");
      if (f && f.indexOf(old) >= 0) e.setAttribute("for", f.replace(old, card.id));
    });
    var h = card.querySelector("h3");
    if (h) h.textContent = key + " · " + label;
    var input = card.querySelector('input[name="outlet"]');
    if (input) input.value = key;
  }

  function setValue(card, value, waiting) {
    var strong = card.querySelector("[data-value]");
    if (!strong) return;
    if (!card.hasAttribute("data-server-value")) {  // what the server's copy showed
      card.setAttribute("data-server-value", strong.closest(".now").hidden ? "" : strong.textContent);
    }
    strong.textContent = util.ohm(value);
    var line = strong.closest(".now");
    if (line) line.hidden = false;
    var feedback = card.querySelector("[data-feedback]");
    if (waiting && feedback) {
      // the server's feedback was about the value it had: say where this one stands instead
      if (card.serverFeedback === undefined) card.serverFeedback = feedback.innerHTML;
      feedback.textContent = "Waiting to send." + util.bandNote(card, value);
    }
    var tag = card.querySelector(".queued");
    if (waiting && !tag) {
      tag = el("span", { "class": "badge queued" }, "waiting to send");
      line.appendChild(document.createTextNode(" "));
      line.appendChild(tag);
    } else if (!waiting && tag) {
      tag.remove();
    }
    card.classList.remove("pending");
  }

  /* Back to what the server's copy showed (a refused item changed nothing there). */
  function restore(card) {
    var strong = card.querySelector("[data-value]");
    if (!strong || !card.hasAttribute("data-server-value")) return;
    var shown = card.getAttribute("data-server-value");
    strong.textContent = shown;
    strong.closest(".now").hidden = !shown;
    var tag = card.querySelector(".queued");
    if (tag) tag.remove();
    var feedback = card.querySelector("[data-feedback]");
    if (feedback && card.serverFeedback !== undefined) {
      feedback.innerHTML = card.serverFeedback;
      card.serverFeedback = undefined;
    }
    if (!shown) card.classList.add("pending");
  }

  function setLabel(card, label) {
    var h = card.querySelector("h3");
    if (!h) return;
    var key = card.getAttribute("data-outlet");
    h.textContent = (key || "new") + " · " + label + (key ? "" : " (added on this phone)");
  }

  function addSource(outlet) {
    var select = document.querySelector('#add-outlet select[name="spur_from_key"]');
    if (!select) return;
    var value = outlet.key || "~" + outlet.clientKey;
    var known = Array.prototype.some.call(select.options, function (o) {
      return o.value === value || (outlet.key && o.value === "~" + outlet.clientKey);
    });
    if (known) {
      if (outlet.key) {
        Array.prototype.forEach.call(select.options, function (o) {
          if (o.value === "~" + outlet.clientKey) { o.value = outlet.key; o.textContent = "Spur from " + outlet.key + ": " + outlet.label; }
        });
      }
      return;
    }
    select.appendChild(el("option", { value: value },
      "Spur from " + (outlet.key || "new") + ": " + outlet.label));
  }

  function outletOf(item) {
    var b = item.body;
    return { key: item.reply && item.reply.key, clientKey: item.id, label: b.label,
      kind: b.kind, spurFrom: b.spur_from_key };
  }

  /* options.waiting === false: leave out readings still waiting (online, being sent now). */
  function apply(items, options) {
    var showWaiting = !options || options.waiting !== false;
    var p = page();
    if (!p) return;
    var me = util.pageUser();
    var asOf = Date.parse(p.asOf);
    var fields = STEP_FIELDS[p.step] || [];
    items.forEach(function (item) {
      if (!me || item.userId !== me.id || item.circuitId !== p.circuitId) return;
      var waiting = item.state === "waiting";
      var sentSince = item.state === "sent" && Date.parse(item.serverAt) >= asOf;
      if (!waiting && !sentSince) return;
      if (item.kind === "outlet") {
        var o = outletOf(item);
        addSource(o);
        if (!fields.length || p.step === "e2e") return;
        var card = findCard(p.step, o.key, o.clientKey) || (o.key && findCard(p.step, o.key));
        if (!card) card = outletCard(o);
        if (o.key && card.getAttribute("data-outlet") !== o.key) adoptKey(card, o.key, o.label);
      } else if (item.kind === "label") {
        fields.forEach(function (f) {
          var c = findCard(f, item.body.outlet_key || null, item.needs);
          if (c) setLabel(c, item.body.label);
        });
      } else if (item.kind === "reading" && fields.indexOf(item.body.step) >= 0 &&
                 (showWaiting || !waiting)) {
        var rc = findCard(item.body.step, item.body.outlet || null, item.needs);
        if (rc) setValue(rc, item.body.value, waiting);
      }
    });
    asOfLine(p, asOf, waitingReadings(items, p));
  }

  /* Readings of this user and circuit still waiting on the phone. */
  function waitingReadings(items, p) {
    var me = util.pageUser();
    return items.filter(function (item) {
      return me && item.userId === me.id && item.circuitId === p.circuitId &&
        item.state === "waiting" && item.kind === "reading";
    }).length;
  }

  // the outbox was redrawn (a reading kept offline, one sent): the "as of" line follows it,
  // so it never says "nothing waiting" beside a reading that waits
  document.addEventListener("ringtest:drawn", function (event) {
    var p = page();
    if (p && Array.isArray(event.detail)) {
      asOfLine(p, Date.parse(p.asOf), waitingReadings(event.detail, p));
    }
  });

  function asOfLine(p, asOf, waiting) {
    var line = document.getElementById("as-of");
    var old = isFinite(asOf) && root.performance &&
      performance.timeOrigin - asOf > OLD_COPY_MS;
    if (!navigator.onLine || waiting || old) {
      if (!line) {
        line = el("p", { id: "as-of", "class": "flash flash-info as-of", role: "status" });
        p.el.insertBefore(line, p.el.firstChild);
      }
      line.textContent = "As of " + util.clock(asOf) + ", " +
        (waiting ? util.count(waiting, "reading", "readings") + " waiting."
          : "nothing waiting to send.");
      line.hidden = false;
    } else if (line) {
      line.hidden = true;
    }
  }

  RT.overlay = { apply: apply, outletCard: outletCard, findCard: findCard, setValue: setValue,
    restore: restore,
    setLabel: setLabel, adoptKey: adoptKey, addSource: addSource, page: page };
})(self);
