/* Instant feedback on the reading pages. Only an enhancement: every form also works as a
   plain post. A reading form is sent to the JSON endpoint (data-api) with its client id; the
   reply's feedback and leading diagnosis replace the page's in place. When the network is
   not there, window.ringtestOffline.enqueue(url, body) is used if the page has it, else the
   form is posted the ordinary way. */
(function () {
  "use strict";

  function csrfToken() {
    var meta = document.querySelector('meta[name="csrf-token"]');
    return meta ? meta.getAttribute("content") : "";
  }

  function newId() {
    if (window.crypto && window.crypto.randomUUID) {
      return window.crypto.randomUUID();
    }
    var s = "";
    for (var i = 0; i < 32; i++) {
      s += Math.floor(Math.random() * 16).toString(16);
    }
    return s.slice(0, 8) + "-" + s.slice(8, 12) + "-" + s.slice(12, 16) + "-" + s.slice(16);
  }

  function deviceLabel() {
    try {
      return localStorage.getItem("ringtest-device") || navigator.userAgent;
    } catch (e) {
      return navigator.userAgent;
    }
  }

  function showError(form, text) {
    var box = form.querySelector(".js-error");
    if (!box) { return; }
    box.textContent = text || "";
    box.hidden = !text;
    var input = form.querySelector('input[name="value"]');
    if (input) { input.setAttribute("aria-invalid", text ? "true" : "false"); }
  }

  function focusNext(anchor) {
    if (!anchor) { return; }
    var card = document.getElementById(anchor);
    var input = card && card.querySelector('input[name="value"]');
    if (input) {
      card.scrollIntoView({ block: "center" });
      input.focus({ preventScroll: true });
    }
  }

  function showSlip(form, data) {
    // The decimal point probably slipped: the server's two one-tap answers replace the error.
    var card = form.closest(".reading");
    var box = card && card.querySelector("[data-slip-box]");
    if (!box || !data.html || !data.html.slip) { return false; }
    showError(form, "");
    box.innerHTML = data.html.slip;
    box.querySelectorAll("form").forEach(enhance);
    var first = box.querySelector("button");
    if (first) { first.focus(); }
    return true;
  }

  function applyReply(form, reply) {
    var card = form.closest(".reading");
    if (card) {
      var value = card.querySelector("[data-value]");
      if (value) {
        value.textContent = reply.value === "OL" ? "OL" : Number(reply.value).toFixed(2) + " Ω";
        var line = value.closest(".now");
        if (line) { line.hidden = false; }
      }
      var feedback = card.querySelector("[data-feedback]");
      if (feedback && reply.html) { feedback.innerHTML = reply.html.feedback; }
      card.classList.remove("pending");
      var label = form.querySelector("label");
      if (label) { label.textContent = "Correct the reading (Ω)"; }
    }
    var slipBox = card && card.querySelector("[data-slip-box]");
    if (slipBox) { slipBox.innerHTML = ""; }
    var leading = document.getElementById("leading");
    if (leading && reply.html) { leading.innerHTML = reply.html.leading; }
    form.querySelector('input[name="value"]').value = "";
    (card || form).querySelectorAll('input[name="client_id"]').forEach(function (input) {
      input.value = newId();
    });
    focusNext(reply.next_anchor);
  }

  function send(form, ol) {
    var input = form.querySelector('input[name="value"]');
    var outlet = form.querySelector('input[name="outlet"]').value;
    var body = {
      step: form.querySelector('input[name="field"]').value,
      outlet: outlet || null,
      value: ol ? "OL" : input.value.trim(),
      client_id: form.querySelector('input[name="client_id"]').value,
      device: deviceLabel(),
      keep: (form.querySelector('input[name="keep"]') || {}).value === "1"
    };
    if (!ol && body.value === "") {
      showError(form, "Type the reading in ohms, or tap OL if the meter shows OL.");
      input.focus();
      return;
    }
    var buttons = form.querySelectorAll("button, input[type=submit]");
    buttons.forEach(function (b) { b.disabled = true; });
    fetch(form.getAttribute("data-api"), {
      method: "POST",
      credentials: "same-origin",
      headers: { "Content-Type": "application/json", "X-CSRFToken": csrfToken() },
      body: JSON.stringify(body)
    }).then(function (response) {
      return response.json().then(function (data) { return { status: response.status, data: data }; });
    }).then(function (result) {
      if (result.status === 200) {
        showError(form, "");
        applyReply(form, result.data);
      } else if (result.data && result.data.slip && showSlip(form, result.data)) {
        return;
      } else {
        var errors = (result.data && result.data.errors) || {};
        var first = Object.keys(errors)[0];
        showError(form, first ? errors[first].join(" ") : "Not saved.");
      }
    }).catch(function () {
      var offline = window.ringtestOffline;
      if (offline && typeof offline.enqueue === "function") {
        offline.enqueue(form.getAttribute("data-api"), body);
        showError(form, "");
        var feedback = form.closest(".reading").querySelector("[data-feedback]");
        if (feedback) { feedback.textContent = "Kept on this phone; it will be sent when the signal is back."; }
        form.querySelector('input[name="client_id"]').value = newId();
      } else {
        if (ol) { form.querySelector('input[name="value"]').value = "OL"; }
        form.submit();
      }
    }).finally(function () {
      buttons.forEach(function (b) { b.disabled = false; });
    });
  }

  function enhance(form) {
    var device = form.querySelector('input[name="device"]');
    if (device) { device.value = deviceLabel(); }
    if (!form.classList.contains("reading-form") || !window.fetch) { return; }
    var olPressed = false;
    form.querySelectorAll('[name="ol"]').forEach(function (b) {
      b.addEventListener("click", function () { olPressed = true; });
    });
    form.querySelectorAll('[name="save"]').forEach(function (b) {
      b.addEventListener("click", function () { olPressed = false; });
    });
    form.addEventListener("submit", function (event) {
      event.preventDefault();
      var ol = olPressed;
      olPressed = false;
      send(form, ol);
    });
  }

  document.addEventListener("DOMContentLoaded", function () {
    document.querySelectorAll("form").forEach(enhance);
    // The card the server marked (a new outlet's, or the first reading still due) takes the
    // focus. A URL fragment (#r-ln-c) names a card too; the browser moves the focus to the
    // fragment once the page has loaded, so that focus waits for the load.
    var target = location.hash && document.getElementById(location.hash.slice(1));
    if (target && target.classList.contains("reading")) {
      window.addEventListener("load", function () {
        window.setTimeout(function () { focusNext(target.id); }, 0);
      });
    } else {
      var focused = document.querySelector(".reading.focus");
      if (focused) { focusNext(focused.id); }
    }
    var sw = document.body.getAttribute("data-sw");
    if (sw && "serviceWorker" in navigator) {
      navigator.serviceWorker.register(sw, { scope: "/" }).catch(function () { /* optional */ });
    }
  });
})();
