/* What the phone holds, in words, on every page: the status line (waiting, sending, sent),
 * the "not accepted" list (refused by the server: kept until entered again or discarded)
 * and items held for another user of this phone (never sent under this session).
 *
 *   RT.status.refresh()          redraw from the outbox; resolves with its items
 *   RT.status.say(kind, parts)   one status message; parts are strings or {href, text}
 *   RT.status.report(report)     after a replay: what was sent, refused, left
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var util = RT.util;

  function main() { return document.getElementById("main") || document.body; }

  function node(id, tag, role) {
    var el = document.getElementById(id);
    if (!el) {
      el = document.createElement(tag);
      el.id = id;
      if (role) { el.setAttribute("role", role); el.setAttribute("aria-live", "polite"); }
      var m = main();
      var after = document.getElementById("offline-status");
      m.insertBefore(el, after && after !== el ? after.nextSibling : m.firstChild);
    }
    return el;
  }

  function text(el, parts) {
    el.textContent = "";
    parts.forEach(function (part) {
      if (typeof part === "string") {
        el.appendChild(document.createTextNode(part));
      } else if (part.href) {
        var a = document.createElement("a");
        a.href = part.href;
        a.textContent = part.text;
        el.appendChild(a);
      } else if (part.button) {
        var b = document.createElement("button");
        b.type = "button";
        b.className = "button";
        b.textContent = part.button;
        b.addEventListener("click", part.onclick);
        el.appendChild(b);
      }
    });
  }

  function say(kind, parts) {
    var el = node("offline-status", "div", "status");
    el.className = "flash flash-" + kind + " offline-status";
    text(el, parts);
    el.hidden = false;
  }

  function things(items) {
    var readings = items.filter(function (i) { return i.kind === "reading"; }).length;
    var other = items.length - readings;
    var words = [];
    if (readings || !other) words.push(util.count(readings, "reading", "readings"));
    if (other) words.push(util.count(other, "other change", "other changes"));
    return words.join(" and ");
  }

  /* The job (or circuit) this page is about, if any. */
  function context() {
    var section = document.querySelector("[data-circuit]");
    if (section) {
      return { jobId: Number(section.getAttribute("data-job")),
        circuitId: Number(section.getAttribute("data-circuit")) };
    }
    var m = /^\/jobs\/(\d+)\/?$/.exec(location.pathname);
    return m ? { jobId: Number(m[1]), circuitId: null } : null;
  }

  function mine(item, me) { return me && item.userId === me.id; }

  function enterAgainUrl(item) {
    if (item.kind === "reading") {
      var step = item.body.step;
      var page = step === "ln" || step === "le" ? step : "e2e";
      var anchor = "r-" + step + (item.body.outlet ? "-" + item.body.outlet : "");
      return "/circuits/" + item.circuitId + "/test/" + page + "#" + anchor;
    }
    return "/circuits/" + item.circuitId + "/test/ln#add-outlet";
  }

  function drawRefused(items, me) {
    var here = context();
    var refused = items.filter(function (i) { return i.state === "refused" && mine(i, me); });
    var shown = refused.filter(function (i) {
      return !here || !here.jobId || i.jobId === here.jobId || i.circuitId === here.circuitId;
    });
    var box = document.getElementById("not-accepted");
    if (!shown.length) { if (box) box.remove(); return; }
    box = node("not-accepted", "section");
    box.className = "flash flash-error not-accepted";
    box.setAttribute("aria-labelledby", "not-accepted-h");
    box.textContent = "";
    var h = document.createElement("h2");
    h.id = "not-accepted-h";
    h.textContent = "Not accepted (" + shown.length + "): nothing of these was stored";
    box.appendChild(h);
    var list = document.createElement("ul");
    shown.forEach(function (item) {
      var li = document.createElement("li");
      li.setAttribute("data-item", item.id);
      text(li, [item.words + ": " + item.reason + " ",
        { href: enterAgainUrl(item), text: "Enter again" }, " ",
        { button: "Discard", onclick: function () { discard(item); } }]);
      list.appendChild(li);
    });
    box.appendChild(list);
  }

  /* The decimal-point question answered from the list: the same reading, sent again with the
   * corrected value or kept as typed. */
  function answer(item, value, keep) {
    var id = util.newClientId();
    var body = JSON.parse(JSON.stringify(item.body));
    body.value = value;
    body.keep = keep;
    body.client_id = id;
    var next = { id: id, userId: item.userId, userName: item.userName, kind: item.kind,
      circuitId: item.circuitId, jobId: item.jobId, body: body, needs: item.needs,
      words: item.words.replace(/= .*$/, "= " + value), target: item.target };
    RT.outbox.add(next).then(function () { return RT.replay.run(); }).then(refresh);
  }

  function drawQuestions(items, me) {
    var asked = items.filter(function (i) { return i.state === "question" && mine(i, me); });
    var box = document.getElementById("outbox-questions");
    var open = asked.filter(function (i) {  // a card on this page asks itself
      var card = RT.overlay && RT.overlay.findCard(i.body.step, i.body.outlet || null, i.needs);
      return !(card && card.querySelector("[data-slip]")) ||
        (RT.overlay.page() || {}).circuitId !== i.circuitId;
    });
    if (!open.length) { if (box) box.remove(); return; }
    box = node("outbox-questions", "section");
    box.className = "flash flash-warning outbox-questions";
    box.textContent = "";
    open.forEach(function (item) {
      var slip = (item.reply && item.reply.slip) || {};
      var p = document.createElement("p");
      text(p, ["Not stored yet, your answer is needed: " + item.words + ". " + item.reason + " ",
        { button: util.ohm(slip.suggested), onclick: function () { answer(item, String(slip.suggested), false); } }, " ",
        { button: "keep " + util.ohm(slip.typed), onclick: function () { answer(item, String(slip.typed), true); } }]);
      box.appendChild(p);
    });
  }

  function discard(item) {
    RT.outbox.remove(item.id).then(refresh);
  }

  function claim(items, me) {
    return Promise.all(items.map(function (i) {
      return RT.outbox.update(i.id, { userId: me.id, userName: me.name });
    })).then(function () { return RT.replay.run(); }).then(refresh);
  }

  function drawHeld(items, me) {
    var held = items.filter(function (i) { return i.state !== "sent" && !mine(i, me) && i.userId != null; });
    var unknown = items.filter(function (i) { return i.state !== "sent" && i.userId == null; });
    var box = document.getElementById("outbox-held");
    if (!held.length && !unknown.length) { if (box) box.remove(); return; }
    box = node("outbox-held", "section");
    box.className = "flash flash-warning outbox-held";
    box.textContent = "";
    var names = {};
    held.forEach(function (i) { names[i.userName || "another user"] = (names[i.userName || "another user"] || []).concat(i); });
    Object.keys(names).forEach(function (name) {
      var p = document.createElement("p");
      p.textContent = "Held on this phone for " + name + ": " + things(names[name]) +
        " (" + names[name].map(function (i) { return i.words; }).join("; ") + "). They are " +
        "sent only when " + name + " signs in here, never under another session.";
      box.appendChild(p);
    });
    if (unknown.length && me) {
      var p = document.createElement("p");
      text(p, [things(unknown) + " kept by an earlier version of this app, owner not recorded (" +
        unknown.map(function (i) { return i.words; }).join("; ") + "). ",
        { button: "Send them as mine", onclick: function () { claim(unknown, me); } }, " ",
        { button: "Discard them", onclick: function () {
          Promise.all(unknown.map(function (i) { return RT.outbox.remove(i.id); })).then(refresh);
        } }]);
      box.appendChild(p);
    }
  }

  function drawWaiting(items, me) {
    var waiting = items.filter(function (i) { return i.state === "waiting" && mine(i, me); });
    var el = document.getElementById("offline-status");
    if (waiting.length) {
      if (!me) return;
      say("warning", [navigator.onLine
        ? "Sending " + things(waiting) + " saved on this phone…"
        : "Saved on this phone, will send when back online (" + things(waiting) + " waiting)."]);
    } else if (!navigator.onLine) {
      say("info", ["Offline: pages you opened before still open, and what you enter is " +
        "kept on this phone."]);
    } else if (el && el.getAttribute("data-keep") !== "1") {
      el.hidden = true;
    }
  }

  function refresh() {
    var me = util.pageUser();
    return RT.outbox.all().then(function (items) {
      drawWaiting(items, me);
      drawRefused(items, me);
      drawQuestions(items, me);
      drawHeld(items, me);
      if (!me && items.some(function (i) { return i.state === "waiting"; }) &&
          !/\/login\/?$/.test(location.pathname)) {
        say("warning", [things(items.filter(function (i) { return i.state === "waiting"; })) +
          " waiting on this phone: ", { href: "/login", text: "log in to send them" }, "."]);
      }
      document.dispatchEvent(new CustomEvent("ringtest:drawn", { detail: items }));
      return items;
    }, function () {
      return [];
    });
  }

  function report(r) {
    return refresh().then(function (items) {
      var me = util.pageUser();
      var left = items.filter(function (i) { return i.state === "waiting" && mine(i, me); });
      var parts = [];
      if (r.sent) parts.push("Sent " + things(r.sentItems) + " saved on this phone. ");
      if (r.refused) parts.push(things(r.refusedItems) + " not accepted: see the list. ");
      if (r.outcome === "login" && left.length) {
        parts.push(things(left) + " waiting: ");
        parts.push({ href: "/login?next=" + encodeURIComponent(location.pathname), text: "log in again to send them" });
        parts.push(".");
      } else if (left.length && r.outcome !== "busy") {
        parts.push("Still saved on this phone, will send when back online (" + things(left) + ").");
      }
      if (parts.length) {
        say(left.length || r.refused ? "warning" : "ok", parts);
        document.getElementById("offline-status").setAttribute("data-keep", "1");
      }
      return items;
    });
  }

  RT.status = { refresh: refresh, say: say, report: report, things: things, context: context };
})(self);
