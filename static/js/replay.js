/* Sending the outbox, oldest first, through the JSON API only (pages and service worker).
 *
 * RT.replay.run() -> Promise of {sent, refused, outcome}; outcome is "done", "later" (no
 * network or the server is failing: everything left stays waiting, in order), "login" (the
 * session has ended: sign in to send) or "busy" (another tab or the worker is sending; the
 * holder may have read the outbox before the newest item went in, so the run is tried again
 * BUSY_RETRY_MS later, up to BUSY_RETRIES times in a row: nothing is left unsent for want of a
 * trigger).
 *
 * Rules: an item is sent only under its own user's session (asked of /api/session first, so a
 * stale page cannot decide it); a 2xx is "sent"; 401 stops and waits for a sign-in; 5xx and
 * network errors stop and wait; a CSRF refusal is retried once with a fresh token; any other
 * answer (409 locked job or safety checks missing, 404/400 outlet gone, 403, 422) is
 * "refused" and kept with the server's reason until the user re-enters or discards it. An item
 * that needs an outlet made offline takes that outlet's key from its sent reply, and is
 * refused with it when the outlet was refused.
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var LOCK = "ringtest-outbox";
  var BUSY_RETRY_MS = 700;
  var BUSY_RETRIES = 5;
  var running = null;
  var busyTries = 0;

  function url(item, key) {
    var base = "/api/circuits/" + item.circuitId;
    if (item.kind === "reading") return base + "/readings";
    if (item.kind === "outlet") return base + "/outlets";
    if (item.kind === "label") return base + "/outlets/" + encodeURIComponent(key);
    return base + "/step";
  }

  function session() {
    return fetch("/api/session", { credentials: "same-origin", cache: "no-store",
      headers: { Accept: "application/json" } })
      .then(function (r) { return r.json(); });
  }

  function reasonOf(status, data) {
    var errors = (data && data.errors) || {};
    var first = Object.keys(errors)[0];
    var text = first ? [].concat(errors[first]).join(" ") : "";
    return text || "The server did not accept it (" + status + ").";
  }

  function post(item, body, token) {
    return fetch(url(item, body.__key), {
      method: "POST", credentials: "same-origin", cache: "no-store",
      headers: { "Content-Type": "application/json", Accept: "application/json",
        "X-CSRFToken": token || "" },
      body: JSON.stringify(body, function (k, v) { return k === "__key" ? undefined : v; }),
    }).then(function (response) {
      var json = (response.headers.get("Content-Type") || "").indexOf("json") >= 0;
      var date = response.headers.get("Date");
      return (json ? response.json() : Promise.resolve(null)).then(function (data) {
        return { status: response.status, json: json, data: data,
          serverAt: date ? new Date(date).toISOString() : new Date().toISOString() };
      });
    });
  }

  /* The body to send, with what an outlet made offline turned into its key; or a refusal. */
  function resolve(item, byId) {
    var body = JSON.parse(JSON.stringify(item.body));
    if (item.kind === "label") body.__key = body.outlet_key;
    if (!item.needs) return { body: body };
    var parent = byId[item.needs];
    if (!parent) {
      return { body: body, key: body.outlet || body.__key || body.spur_from_key || null };
    }
    if (parent.state === "refused") {
      return { refused: "Its outlet (" + parent.body.label + ") was not accepted: " + parent.reason };
    }
    if (parent.state !== "sent" || !parent.reply || !parent.reply.key) return { wait: true };
    if (item.kind === "reading") body.outlet = parent.reply.key;
    else if (item.kind === "label") body.__key = parent.reply.key;
    else if (item.kind === "outlet") body.spur_from_key = parent.reply.key;
    return { body: body };
  }

  /* An outlet made offline now has its key: the items waiting behind it carry that key. */
  function adopt(outlet, items) {
    var key = outlet.reply && outlet.reply.key;
    var followers = items.filter(function (i) { return i.needs === outlet.id && i.state !== "sent"; });
    return Promise.all(followers.map(function (i) {
      var body = i.body;
      if (i.kind === "reading") body.outlet = key;
      else if (i.kind === "label") body.outlet_key = key;
      else if (i.kind === "outlet") body.spur_from_key = key;
      i.needs = null;
      return RT.outbox.update(i.id, { body: body, needs: null });
    }));
  }

  function notify(detail) {
    if (root.document) {
      root.dispatchEvent(new CustomEvent("ringtest:outbox", { detail: detail }));
    } else if (root.clients) {
      root.clients.matchAll({ type: "window" }).then(function (list) {
        list.forEach(function (c) { c.postMessage({ type: "outbox", detail: detail }); });
      });
    }
  }

  /* Passes over the outbox until nothing new of this user waits (items added while a pass
   * runs are sent by the next one, still in order). */
  function sendAll() {
    var report = { sent: 0, refused: 0, sentItems: [], refusedItems: [], outcome: "done" };
    var tried = {};
    function again(result) {
      if (result.outcome !== "done" || !result.fresh) return result;
      return pass(report, tried).then(again);
    }
    return pass(report, tried).then(again);
  }

  function pass(report, tried) {
    report.fresh = false;
    return RT.outbox.all().then(function (items) {
      var waiting = items.filter(function (i) { return i.state === "waiting" && !tried[i.id]; });
      if (!waiting.length) return report;
      return session().then(function (me) {
        if (!me || me.user_id == null) { report.outcome = "login"; return report; }
        var token = me.csrf_token;
        var byId = {};
        items.forEach(function (i) { byId[i.id] = i; });
        var mine = waiting.filter(function (i) { return i.userId === me.user_id; });
        mine.forEach(function (i) { tried[i.id] = true; });
        report.fresh = mine.length > 0;

        function refuse(item, reason) {
          item.state = "refused";
          item.reason = reason;
          report.refused += 1;
          report.refusedItems.push(item);
          return RT.outbox.update(item.id, { state: "refused", reason: reason }).then(function () {
            notify({ item: item, state: "refused" });
          });
        }

        /* A reading that looks like a slipped decimal point: not stored, not refused either;
         * it waits for the user's answer (the corrected value, or keep it as typed). */
        function ask(item, data) {
          var changes = { state: "question", reply: data,
            reason: data.slip.question || "Decimal point slipped?" };
          Object.keys(changes).forEach(function (k) { item[k] = changes[k]; });
          report.asked = (report.asked || 0) + 1;
          return RT.outbox.update(item.id, changes).then(function () {
            notify({ item: item, state: "question" });
          });
        }

        function one(index, retried) {
          if (index >= mine.length) return Promise.resolve(report);
          var item = mine[index];
          var plan = resolve(item, byId);
          if (plan.refused) return refuse(item, plan.refused).then(function () { return one(index + 1); });
          if (plan.wait) { report.outcome = "later"; return Promise.resolve(report); }
          return post(item, plan.body, token).then(function (answer) {
            if (answer.status >= 200 && answer.status < 300) {
              var changes = { state: "sent", sentAt: new Date().toISOString(),
                serverAt: answer.serverAt, reply: answer.data, reason: null };
              Object.keys(changes).forEach(function (k) { item[k] = changes[k]; });
              report.sent += 1;
              report.sentItems.push(item);
              return RT.outbox.update(item.id, changes).then(function () {
                return item.kind === "outlet" ? adopt(item, items) : undefined;
              }).then(function () {
                notify({ item: item, state: "sent" });
                return one(index + 1);
              });
            }
            if (answer.status === 401) { report.outcome = "login"; return report; }
            if (answer.status === 422 && answer.data && answer.data.slip) {
              return ask(item, answer.data).then(function () { return one(index + 1); });
            }
            if (answer.status === 400 && !answer.json && !retried) {
              return session().then(function (fresh) {  // the form token expired
                if (!fresh || fresh.user_id !== me.user_id) { report.outcome = "login"; return report; }
                token = fresh.csrf_token;
                return one(index, true);
              });
            }
            if (answer.status >= 500 || (answer.status === 400 && !answer.json)) {
              report.outcome = "later";
              return report;
            }
            return refuse(item, reasonOf(answer.status, answer.data)).then(function () {
              return one(index + 1);
            });
          });
        }

        return one(0, false);
      });
    }).catch(function () {
      report.outcome = "later";
      return report;
    });
  }

  function run() {
    if (running) return running.then(function () { return run(); }); // what came meanwhile
    var nav = root.navigator;
    var work = nav.locks && nav.locks.request
      ? nav.locks.request(LOCK, { ifAvailable: true }, function (lock) {
        return lock ? sendAll()
          : { sent: 0, refused: 0, sentItems: [], refusedItems: [], outcome: "busy" };
      })
      : sendAll();
    running = Promise.resolve(work).then(function (report) {
      running = null;
      notify({ done: true, report: report });
      if (report.outcome !== "busy") {
        busyTries = 0;
      } else if (busyTries < BUSY_RETRIES && root.setTimeout) {
        busyTries += 1;
        root.setTimeout(run, BUSY_RETRY_MS);
      }
      return report;
    }, function () {
      running = null;
      return { sent: 0, refused: 0, sentItems: [], refusedItems: [], outcome: "later" };
    });
    return running;
  }

  RT.replay = { run: run };
})(self);
