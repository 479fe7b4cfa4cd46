/* The decimal-point question ("3.9 where about 0.39 was expected"): a reading near 10x or
 * 0.1x of its expected value is asked about, one tap for each answer (the corrected value, or
 * keep it as typed), before anything is stored.
 *
 *   RT.slip.show(card, form, html)     the server's question (its rendered answers)
 *   RT.slip.local(form, body)          without the server: {typed, suggested} from the band
 *                                      the server put on the card (data-low / data-high)
 *   RT.slip.askHere(form, body, slip)  that question drawn on the card
 * The answers are reading forms; app.js enhances them (event "ringtest:forms").
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var util = RT.util;

  function clearError(form) {
    var box = form.querySelector(".js-error");
    if (box) { box.textContent = ""; box.hidden = true; }
  }

  function enhanceIn(box) {
    document.dispatchEvent(new CustomEvent("ringtest:forms", { detail: box }));
  }

  /* The decimal-point question: the server's two one-tap answers on the card. */
  function show(card, form, html) {
    var box = card.querySelector("[data-slip-box]");
    if (!box || !html) return false;
    clearError(form);
    box.innerHTML = html;
    enhanceIn(box);
    var first = box.querySelector("button");
    if (first) first.focus();
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

  function local(form, body) {
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

  function askHere(form, body, slip) {
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
      f.appendChild(hidden("csrf_token", util.csrfToken()));
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
    });
    wrap.appendChild(choices);
    box.appendChild(wrap);
    enhanceIn(box);
    clearError(form);
    choices.querySelector("button").focus();
    return true;
  }

  /* The same decimal-point question for any script that queues a reading itself. */
  root.ringtestSlip = {
    check: function (form, value) { return local(form, { value: String(value), keep: false }); },
    ask: function (form, value, slip) {
      var get = function (name) {
        var input = form.querySelector('input[name="' + name + '"]');
        return input ? input.value : "";
      };
      return askHere(form, { step: get("field"), outlet: get("outlet"),
        client_id: get("client_id"), device: util.deviceLabel(), value: String(value) }, slip);
    },
  };

  RT.slip = { show: show, local: local, askHere: askHere };
})(self);
