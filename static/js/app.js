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

  // Offline the server cannot ask about a slipped decimal point, so the page asks with the
  // band the server put on the card (data-low, data-high): the same question as the server's,
  // asked only when the reading is out of the band and the same digits one place left or
  // right are inside it.
  function shifted(text, places) {
    var value = parseFloat(text.replace(",", "."));
    var decimals = (text.replace(",", ".").split(".")[1] || "").length + places;
    var out = (places > 0 ? value / 10 : value * 10).toFixed(Math.max(decimals, 0));
    return out.indexOf(".") >= 0 ? out.replace(/0+$/, "").replace(/\.$/, "") : out;
  }

  function localSlip(form, body) {
    var card = form.closest(".reading");
    if (!card || body.keep || body.value === "OL") { return null; }
    var low = parseFloat(card.getAttribute("data-low"));
    var high = parseFloat(card.getAttribute("data-high"));
    var value = parseFloat(String(body.value).replace(",", "."));
    if (!(value > 0) || isNaN(low) || isNaN(high) || (value >= low && value <= high)) { return null; }
    var candidates = [shifted(String(body.value), 1), shifted(String(body.value), -1)];
    for (var i = 0; i < candidates.length; i++) {
      var c = parseFloat(candidates[i]);
      if (c >= low && c <= high) {
        return { typed: String(parseFloat(String(body.value).replace(",", "."))), suggested: candidates[i] };
      }
    }
    return null;
  }

  function hidden(name, value) {
    var input = document.createElement("input");
    input.type = "hidden";
    input.name = name;
    input.value = value;
    return input;
  }

  function showLocalSlip(form, body, slip) {
    var card = form.closest(".reading");
    var box = card && card.querySelector("[data-slip-box]");
    if (!box) { return false; }
    box.textContent = "";
    var wrap = document.createElement("div");
    wrap.className = "slip";
    wrap.setAttribute("data-slip", "");
    wrap.setAttribute("role", "alert");
    var p = document.createElement("p");
    var strong = document.createElement("strong");
    strong.textContent = "Decimal point slipped?";
    p.appendChild(strong);
    p.appendChild(document.createTextNode(" " + slip.typed + " Ω is out of the expected range here."));
    wrap.appendChild(p);
    var choices = document.createElement("div");
    choices.className = "slip-choices";
    [[slip.suggested, "", slip.suggested + " Ω"], [slip.typed, "1", "keep " + slip.typed + " Ω"]].forEach(function (c) {
      var f = document.createElement("form");
      f.className = "reading-form slip-form";
      f.method = "post";
      f.action = form.action;
      f.setAttribute("data-api", form.getAttribute("data-api"));
      f.appendChild(hidden("csrf_token", csrfToken()));
      f.appendChild(hidden("field", body.step));
      f.appendChild(hidden("outlet", body.outlet || ""));
      f.appendChild(hidden("client_id", body.client_id));
      f.appendChild(hidden("device", body.device));
      f.appendChild(hidden("value", c[0]));
      f.appendChild(hidden("keep", c[1]));
      var b = document.createElement("button");
      b.type = "submit";
      b.name = "save";
      b.value = "1";
      b.className = c[1] ? "button" : "button primary";
      b.textContent = c[2];
      f.appendChild(b);
      choices.appendChild(f);
      enhance(f);
    });
    wrap.appendChild(choices);
    box.appendChild(wrap);
    showError(form, "");
    choices.querySelector("button").focus();
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
      var slip = localSlip(form, body);
      if (slip && showLocalSlip(form, body, slip)) { return; }
      var card = form.closest(".reading");
      var offline = window.ringtestOffline;
      if (offline && typeof offline.enqueue === "function") {
        offline.enqueue(form.getAttribute("data-api"), body);
        showError(form, "");
        var feedback = card && card.querySelector("[data-feedback]");
        if (feedback) { feedback.textContent = "Kept on this phone; it will be sent when the signal is back."; }
        (card || form).querySelectorAll('input[name="client_id"]').forEach(function (input) {
          input.value = newId();
        });
        var slipBox = card && card.querySelector("[data-slip-box]");
        if (slipBox) { slipBox.textContent = ""; }
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

  // For the offline script: the same decimal-point question for a reading it queues itself.
  window.ringtestSlip = {
    check: function (form, value) {
      return localSlip(form, { value: String(value), keep: false });
    },
    ask: function (form, value, slip) {
      var get = function (name) {
        var input = form.querySelector('input[name="' + name + '"]');
        return input ? input.value : "";
      };
      return showLocalSlip(form, { step: get("field"), outlet: get("outlet"),
        client_id: get("client_id"), device: deviceLabel(), value: String(value) }, slip);
    }
  };

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
