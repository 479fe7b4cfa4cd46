/* Instant feedback on the reading pages. Only an enhancement: every form also works as a
 * plain post. A reading goes into the outbox (static/js/outbox.js) and is sent at once when
 * there is a signal; the server's feedback and leading diagnosis then replace the card's in
 * place. Without a signal the card shows the reading as waiting, with the band the server
 * last gave for it. If the phone cannot store it, the card says so at once. A reading that
 * looks like a slipped decimal point is not stored: the server's two one-tap answers (the
 * corrected value, or keep it as typed) appear on the card.
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var util = RT.util;

  function showError(form, message) {
    var box = form.querySelector(".js-error");
    if (!box) return;
    box.textContent = message || "";
    box.hidden = !message;
    var input = form.querySelector('input[name="value"]');
    if (input) input.setAttribute("aria-invalid", message ? "true" : "false");
  }

  function note(card, message) {
    var box = card.querySelector(".offline-note");
    if (!box) {
      box = document.createElement("p");
      box.className = "offline-note";
      var feedback = card.querySelector("[data-feedback]");
      card.insertBefore(box, feedback ? feedback.nextSibling : null);
    }
    box.className = "offline-note";
    box.removeAttribute("role");
    box.textContent = message;
    box.hidden = !message;
  }

  function focusNext(anchor) {
    var card = anchor && document.getElementById(anchor);
    var input = card && card.querySelector('input[name="value"]');
    if (input) {
      card.scrollIntoView({ block: "center" });
      input.focus({ preventScroll: true });
    }
  }

  function applyReply(card, reply) {
    RT.overlay.setValue(card, reply.value, false);
    card.setAttribute("data-server-value", util.ohm(reply.value));
    var feedback = card.querySelector("[data-feedback]");
    if (feedback && reply.html) feedback.innerHTML = reply.html.feedback;
    var label = card.querySelector("form label");
    if (label) label.textContent = "Correct the reading (Ω)";
    var slipBox = card.querySelector("[data-slip-box]");
    if (slipBox) slipBox.innerHTML = "";
    var leading = document.getElementById("leading");
    if (leading && reply.html) leading.innerHTML = reply.html.leading;
    note(card, "");
  }

  /* Cards waiting for the server's answer to an item, by item id. */
  var pending = {};

  /* Kept on the phone, not on the server yet: the card says so (with the band it last had). */
  function showWaiting(entry) {
    if (entry.shown) return;
    entry.shown = true;
    RT.overlay.setValue(entry.card, entry.value, true);
    note(entry.card, "Saved on this phone: " + entry.words + ". It will be sent when back " +
      "online." + util.bandNote(entry.card, entry.value));
  }

  /* No server to ask: the card's band asks about a slipped decimal point, and the item
   * waits in the outbox as a question (answered here or from the list), never sent as typed. */
  function askLocally(id, entry) {
    var slip = RT.slip.local(entry.form, { value: entry.value, keep: entry.keep });
    if (!slip) return false;
    delete pending[id];
    RT.overlay.restore(entry.card);
    note(entry.card, "");
    RT.outbox.update(id, { state: "question", reply: { slip: slip },
      reason: "Decimal point slipped? " + slip.typed + " Ω is out of the expected range here." })
      .then(RT.status.refresh);
    var get = function (name) {
      var input = entry.form.querySelector('input[name="' + name + '"]');
      return input ? input.value : "";
    };
    RT.slip.askHere(entry.form, { step: get("field"), outlet: get("outlet"), client_id: id,
      device: util.deviceLabel(), value: entry.value }, slip);
    return true;
  }

  function onOutbox(event) {
    var d = event.detail || {};
    if (d.done) {  // no signal, signed out or another sender: what is pending waits here
      if (d.report && d.report.outcome !== "done" && d.report.outcome !== "busy") {
        Object.keys(pending).forEach(function (id) {
          if (!askLocally(id, pending[id])) showWaiting(pending[id]);
        });
      }
      return;
    }
    if (!d.item || !pending[d.item.id]) return;
    var entry = pending[d.item.id];
    delete pending[d.item.id];
    if (d.state === "sent" && d.item.kind === "reading") {
      applyReply(entry.card, d.item.reply || {});
      if (entry.focus && d.item.reply) focusNext(d.item.reply.next_anchor);
    } else if (d.state === "question") {
      RT.overlay.restore(entry.card);
      note(entry.card, "");
      var html = d.item.reply && d.item.reply.html && d.item.reply.html.slip;
      if (!RT.slip.show(entry.card, entry.form, html)) showError(entry.form, d.item.reason);
    } else if (d.state === "refused") {
      RT.overlay.restore(entry.card); // nothing was stored: the card shows what the server has
      note(entry.card, "");
      showError(entry.form, "Not accepted: " + d.item.reason + " (kept in the list at the top until you enter it again or discard it).");
    }
  }

  function send(form, ol) {
    var card = form.closest(".reading");
    var input = form.querySelector('input[name="value"]');
    var value = ol ? "OL" : input.value.trim();
    if (!value) {
      showError(form, "Type the reading in ohms, or tap OL if the meter shows OL.");
      input.focus();
      return;
    }
    showError(form, "");
    var field = form.querySelector('input[name="field"]').value;
    var key = form.querySelector('input[name="outlet"]').value || null;
    var clientKey = card.getAttribute("data-client-key");
    if (clientKey && card.getAttribute("data-outlet")) clientKey = null; // it has its key now
    var idInput = form.querySelector('input[name="client_id"]');
    var keep = form.querySelector('input[name="keep"]');
    var body = { step: field, outlet: key, value: value,
      client_id: idInput.value || util.newClientId(), keep: !!keep && keep.value === "1" };
    var where = key ? " at outlet " + key : clientKey ? " at the new outlet" : "";
    var words = (util.NAMES[field] || field) + where + " = " + value;
    var entry = RT.forms.item("reading", body, words, RT.forms.target("reading", field,
      key || clientKey, form), clientKey, form);
    RT.forms.queue(entry).then(function () {
      var main = card.querySelector("form.reading-form:not(.slip-form)") || form;
      var waitingEntry = { card: card, form: main, focus: true, value: value, words: words,
        keep: body.keep };
      pending[entry.id] = waitingEntry;
      // the next reading from this card is a new write
      card.querySelectorAll('input[name="client_id"]').forEach(function (i) { i.value = util.newClientId(); });
      var slipBox = card.querySelector("[data-slip-box]");
      if (slipBox && form.classList.contains("slip-form")) slipBox.innerHTML = "";
      else input.value = "";
      if (!navigator.onLine) {  // online, the card changes when the server has it
        if (askLocally(entry.id, waitingEntry)) return;
        showWaiting(waitingEntry);
        var next = card.nextElementSibling;
        while (next && !next.classList.contains("pending")) next = next.nextElementSibling;
        if (next) focusNext(next.id);
      }
    }, function (error) {
      RT.forms.storageFull(card, error);
    });
  }

  function enhance(form) {
    if (form.getAttribute("data-enhanced")) return;
    form.setAttribute("data-enhanced", "1");
    var device = form.querySelector('input[name="device"]');
    if (device) device.value = util.deviceLabel();
    if (!form.classList.contains("reading-form")) return;
    var olPressed = false;
    form.querySelectorAll('[name="ol"]').forEach(function (b) {
      b.addEventListener("click", function () { olPressed = true; });
    });
    form.querySelectorAll('[name="save"]').forEach(function (b) {
      b.addEventListener("click", function () { olPressed = false; });
    });
    form.addEventListener("submit", function (event) {
      event.preventDefault();
      var ol = olPressed || (event.submitter && event.submitter.name === "ol");
      olPressed = false;
      send(form, ol);
    });
  }

  function start() {
    document.querySelectorAll("form").forEach(enhance);
    ["ringtest:card", "ringtest:forms"].forEach(function (name) {
      document.addEventListener(name, function (event) {
        event.detail.querySelectorAll("form").forEach(enhance);
      });
    });
    root.addEventListener("ringtest:outbox", onOutbox);
    // The card the server marked (a new outlet's, or the first reading still due) takes the
    // focus. A URL fragment (#r-ln-c) names a card too; the browser moves the focus to the
    // fragment once the page has loaded, so that focus waits for the load.
    var target = location.hash && document.getElementById(location.hash.slice(1));
    if (target && target.classList.contains("reading")) {
      root.addEventListener("load", function () {
        root.setTimeout(function () { focusNext(target.id); }, 0);
      });
    } else {
      var focused = document.querySelector(".reading.focus");
      if (focused) focusNext(focused.id);
    }
  }

  RT.app = { start: start };
})(self);
