/* The ring test's actions as outbox items: add an outlet, rename one, move to the next step.
 * Each goes into the outbox first and is sent at once when there is a signal, so everything
 * reaches the server in the order it was done, with or without a connection.
 *
 *   RT.forms.queue(item)   keep it (rejects when the phone cannot), then send if online
 *   RT.forms.item(kind, body, words, target, needs)   an item for this page's circuit
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var util = RT.util;

  /* The circuit a form belongs to: the step page's, else the one its endpoint names. */
  function circuitOf(form) {
    var p = RT.overlay.page();
    if (p) return { circuitId: p.circuitId, jobId: p.jobId };
    var m = /\/circuits\/(\d+)\//.exec((form && form.getAttribute("data-api")) || location.pathname);
    return { circuitId: m ? Number(m[1]) : null, jobId: null };
  }

  function item(kind, body, words, target, needs, form) {
    var p = circuitOf(form);
    var me = util.pageUser();
    var id = body.client_id || util.newClientId();
    body.client_id = id;
    body.device = util.deviceLabel();
    return { id: id, userId: me && me.id, userName: me && me.name, kind: kind,
      circuitId: p.circuitId, jobId: p.jobId, body: body, words: words, target: target,
      needs: needs || null };
  }

  /* What an item changes, so that a new entry for it replaces a refused one: the same
   * circuit, the same reading (or label) of the same outlet. */
  function target(kind, field, outlet, form) {
    return [kind, circuitOf(form).circuitId, field, outlet || ""].join(":");
  }

  function sync() {
    var sw = navigator.serviceWorker;
    if (!sw) return;
    sw.ready.then(function (reg) {
      if (reg.sync && reg.sync.register) return reg.sync.register("ringtest-outbox");
      return undefined;
    }).catch(function () { return undefined; });
  }

  function queue(entry) {
    return RT.outbox.add(entry).then(function (kept) {
      RT.status.refresh();
      if (navigator.onLine) {
        // this page sends it now; the worker's Background Sync only when that fails
        RT.replay.run().then(function (report) { if (report.outcome === "later") sync(); });
      } else {
        sync();
      }
      return kept;
    });
  }

  function storageFull(target, error) {
    var note = target.querySelector(".offline-note") || document.createElement("p");
    note.className = "offline-note error";
    note.setAttribute("role", "alert");
    note.textContent = "Not kept: this phone could not store it (" +
      (error && error.name === "QuotaExceededError" ? "storage full" : "storage not available") +
      "). Write it down, free some space and enter it again.";
    target.appendChild(note);
  }

  // ------------------------------------------------------------ add an outlet

  function addOutlet(form) {
    var data = new FormData(form);
    var label = String(data.get("label") || "").trim();
    var error = form.querySelector(".js-error") || document.createElement("p");
    error.className = "error js-error";
    error.setAttribute("role", "alert");
    if (!label) {
      error.textContent = "Say where the outlet is, e.g. Kitchen left of cooker.";
      form.insertBefore(error, form.firstChild);
      return;
    }
    error.textContent = "";
    var spur = String(data.get("spur_from_key") || "");
    var needs = spur.charAt(0) === "~" ? spur.slice(1) : null;
    var num = function (name) { var v = data.get(name); return v ? Number(v) : null; };
    var body = { label: label, kind: String(data.get("kind") || "twin_socket"),
      spur_from_key: needs ? null : (spur || null), fuse_a: num("fuse_a"),
      spur_csa_mm2: spur ? num("spur_csa_mm2") : null,
      spur_cpc_csa_mm2: spur ? num("spur_cpc_csa_mm2") : null };
    var entry = item("outlet", body, "Outlet “" + label + "” added", null, needs);
    queue(entry).then(function () {
      var outlet = { key: null, clientKey: entry.id, label: label, kind: body.kind,
        spurFrom: spur ? spur.replace(/^~.*/, "a new outlet") : null };
      RT.overlay.addSource(outlet);
      var card = RT.overlay.outletCard(outlet);
      form.reset();
      var input = card.querySelector('input[name="value"]');
      if (input) {
        card.scrollIntoView({ block: "center" });
        input.focus({ preventScroll: true });
      }
    }, function (err) { storageFull(form, err); });
  }

  // ------------------------------------------------------------ rename an outlet

  function renameButton(card) {
    if (!card.getAttribute("data-outlet") && !card.getAttribute("data-client-key")) return;
    if (card.querySelector(".rename")) return;
    var details = document.createElement("details");
    details.className = "rename";
    var summary = document.createElement("summary");
    summary.textContent = "Rename";
    details.appendChild(summary);
    var form = document.createElement("form");
    form.className = "stack";
    form.noValidate = true;
    var id = "rn-" + card.id;
    var label = document.createElement("label");
    label.setAttribute("for", id);
    label.textContent = "New name for this outlet";
    var input = document.createElement("input");
    input.id = id;
    input.name = "label";
    input.type = "text";
    input.autocomplete = "off";
    input.maxLength = 120;
    var h = card.querySelector("h3");
    input.value = h ? h.textContent.replace(/^[^·]*·\s*/, "").replace(/ \(added on this phone\)$/, "") : "";
    var save = document.createElement("button");
    save.type = "submit";
    save.className = "button";
    save.textContent = "Save name";
    form.appendChild(label);
    form.appendChild(input);
    form.appendChild(save);
    details.appendChild(form);
    form.addEventListener("submit", function (event) {
      event.preventDefault();
      var text = input.value.trim();
      if (!text) return;
      var key = card.getAttribute("data-outlet") || null;
      var clientKey = card.getAttribute("data-client-key");
      var entry = item("label", { label: text, outlet_key: key, client_id: util.newClientId() },
        "Outlet " + (key || "new") + " renamed “" + text + "”",
        target("label", "label", key || clientKey), key ? null : clientKey);
      queue(entry).then(function () {
        document.querySelectorAll("article[data-outlet]").forEach(function (c) {
          var same = key ? c.getAttribute("data-outlet") === key
            : c.getAttribute("data-client-key") === clientKey;
          if (same) RT.overlay.setLabel(c, text);
        });
        details.open = false;
      }, function (err) { storageFull(form, err); });
    });
    var form0 = card.querySelector("form.reading-form");
    var holder = form0 && (form0.closest("details.correct") || form0);
    card.insertBefore(details, holder && holder.parentNode === card ? holder.nextSibling : null);
  }

  // ------------------------------------------------------------ next step

  function nextStep(form) {
    var step = form.getAttribute("data-next");
    var url = form.getAttribute("data-next-url");
    var entry = item("step", { step: step }, "Moved on to " + (step === "le" ? "step 3" :
      step === "ln" ? "step 2" : "the results"), target("step", step));
    var go = function () { location.assign(url); };
    queue(entry).then(function () {
      if (!navigator.onLine) { go(); return undefined; }
      // online: let what was entered arrive first (a few seconds at most), then move on
      var timer = new Promise(function (resolve) { setTimeout(resolve, 4000); });
      return Promise.race([RT.replay.run(), timer]).then(go);
    }, function () { form.submit(); });
  }

  function onSubmit(event) {
    var form = event.target;
    if (!(form instanceof HTMLFormElement) || !RT.overlay.page()) return;
    if (form.closest("#add-outlet")) {
      event.preventDefault();
      addOutlet(form);
    } else if (form.hasAttribute("data-next")) {
      event.preventDefault();
      nextStep(form);
    }
  }

  function start() {
    var p = RT.overlay.page();
    if (!p || !p.writable) return;
    document.addEventListener("submit", onSubmit);
    if (p.step !== "e2e") document.querySelectorAll("section.readings article.reading").forEach(renameButton);
    document.addEventListener("ringtest:card", function (event) { renameButton(event.detail); });
  }

  RT.forms = { queue: queue, item: item, target: target, storageFull: storageFull,
    start: start, sync: sync };
})(self);
