/* The outbox: every action taken on this phone, kept in IndexedDB until the server has it.
 *
 * An item: {id (its client id), seq (order of entry), userId, userName, kind ("reading",
 * "outlet", "label", "step"), circuitId, jobId, body (the JSON the API takes), words (what
 * the user did, in words), target (what it changes: a new entry for the same target replaces
 * a refused one), needs (client id of an outlet made offline that this item refers to),
 * state ("waiting" | "refused" | "question" (a likely slipped decimal point: the user
 * answers) | "sent"), savedAt, sentAt, serverAt (the server's clock when
 * it took it), reason (why the server refused it), reply}.
 *
 * Items are tied to the user who made them: only that user's session sends them. Sent items
 * are kept for a day so that an older copy of a page can be brought up to date offline.
 * Writes that fail (storage full, private mode) reject: the caller says so at once.
 */
(function (root) {
  "use strict";
  var RT = root.RT = root.RT || {};
  var DB = "ringtest-offline";
  var STORE = "items";
  var KEEP_SENT_MS = 24 * 3600 * 1000;
  /* localStorage keys of earlier versions of the page script (migrated once). */
  var OLD_KEYS = [
    { waiting: "ringtest.outbox.v1", refused: "ringtest.outbox.rejected.v1" },
    { waiting: "ringcheck.outbox.v1", refused: "ringcheck.outbox.rejected.v1" },
  ];
  var opening = null;
  var lastSeq = 0;

  function open() {
    if (!opening) {
      opening = new Promise(function (resolve, reject) {
        if (!root.indexedDB) { reject(new Error("no IndexedDB")); return; }
        var request = root.indexedDB.open(DB, 1);
        request.onupgradeneeded = function () {
          request.result.createObjectStore(STORE, { keyPath: "id" });
        };
        request.onsuccess = function () { resolve(request.result); };
        request.onerror = function () { reject(request.error); };
        request.onblocked = function () { reject(new Error("outbox blocked")); };
      });
      opening.catch(function () { opening = null; });
    }
    return opening;
  }

  /* Run fn(store) in one transaction; resolves with fn's result when it has committed. */
  function tx(mode, fn) {
    return open().then(function (db) {
      return new Promise(function (resolve, reject) {
        var t = db.transaction(STORE, mode);
        var result;
        t.oncomplete = function () { resolve(result); };
        t.onerror = function () { reject(t.error); };
        t.onabort = function () { reject(t.error || new Error("aborted")); };
        try {
          result = fn(t.objectStore(STORE));
        } catch (error) {
          reject(error);
          try { t.abort(); } catch (e) { /* already finished */ }
        }
      });
    });
  }

  function all() {
    return tx("readonly", function (store) {
      var box = { items: [] };
      store.getAll().onsuccess = function (event) { box.items = event.target.result; };
      return box;
    }).then(function (box) {
      return box.items.sort(function (a, b) { return a.seq - b.seq; });
    });
  }

  function put(item) {
    return tx("readwrite", function (store) { store.put(item); return item; });
  }

  function remove(id) {
    return tx("readwrite", function (store) { store.delete(id); });
  }

  function nextSeq() {
    lastSeq = Math.max(Date.now() * 1000, lastSeq + 1);
    return lastSeq;
  }

  /* Keep a new item (state "waiting"); a refused item for the same target is re-entered by
   * it and leaves the list. Rejects when the phone cannot store it. */
  function add(item) {
    item.seq = nextSeq();
    item.state = "waiting";
    item.savedAt = new Date().toISOString();
    return all().then(function (items) {
      var replaced = items.filter(function (old) {
        return (old.state === "refused" || old.state === "question") && item.target &&
          old.target === item.target;
      });
      return tx("readwrite", function (store) {
        replaced.forEach(function (old) { store.delete(old.id); });
        store.put(item);
        return item;
      });
    });
  }

  function update(id, changes) {
    return tx("readwrite", function (store) {
      var request = store.get(id);
      request.onsuccess = function () {
        if (!request.result) return;
        var item = request.result;
        Object.keys(changes).forEach(function (k) { item[k] = changes[k]; });
        store.put(item);
      };
    });
  }

  function prune() {
    var cutoff = Date.now() - KEEP_SENT_MS;
    return all().then(function (items) {
      var old = items.filter(function (i) {
        return i.state === "sent" && Date.parse(i.sentAt) < cutoff;
      });
      if (!old.length) return undefined;
      return tx("readwrite", function (store) { old.forEach(function (i) { store.delete(i.id); }); });
    });
  }

  /* An item of the old localStorage outbox as a reading of this one. Its user is not known:
   * it is held until someone signed in chooses to send it as theirs or discards it. */
  function fromOld(old, state) {
    var get = function (name) {
      if (old.json) return old.json[name] == null ? "" : String(old.json[name]);
      var pair = (old.fields || []).find(function (f) { return f[0] === name; });
      return pair ? pair[1] : "";
    };
    var step = get("step") || get("field");
    var value = get("ol") ? "OL" : get("value");
    var match = /\/(?:api\/)?circuits\/(\d+)\//.exec(old.url || "");
    var id = old.clientId || get("client_id");
    if (!match || !step || !id) return null;
    var outlet = get("outlet") || null;
    return {
      id: id, seq: nextSeq(), userId: null, userName: "", kind: "reading",
      circuitId: Number(match[1]), jobId: null,
      body: { step: step, outlet: outlet, value: value, client_id: id, device: get("device") },
      words: old.label || (RT.util.NAMES[step] || step) + (outlet ? " at outlet " + outlet : "") +
        " = " + value,
      target: ["reading", match[1], step, outlet || ""].join(":"), needs: null,
      state: state, savedAt: old.savedAt || new Date().toISOString(), migrated: true,
      reason: state === "refused" ? "Not accepted before this version of the app." : null,
    };
  }

  /* Move items stored under the old localStorage keys into IndexedDB, once. */
  function migrate() {
    var storage;
    try { storage = root.localStorage; } catch (e) { return Promise.resolve(0); }
    if (!storage) return Promise.resolve(0);
    var found = [];
    OLD_KEYS.forEach(function (keys) {
      [["waiting", keys.waiting], ["refused", keys.refused]].forEach(function (pair) {
        var list;
        try { list = JSON.parse(storage.getItem(pair[1]) || "[]"); } catch (e) { list = []; }
        (Array.isArray(list) ? list : []).forEach(function (old) {
          var item = fromOld(old, pair[0]);
          if (item) found.push(item);
        });
      });
    });
    if (!found.length) {
      OLD_KEYS.forEach(function (k) { storage.removeItem(k.waiting); storage.removeItem(k.refused); });
      return Promise.resolve(0);
    }
    return tx("readwrite", function (store) {
      found.forEach(function (item) { store.put(item); });
    }).then(function () {
      OLD_KEYS.forEach(function (k) { storage.removeItem(k.waiting); storage.removeItem(k.refused); });
      return found.length;
    });
  }

  RT.outbox = { open: open, all: all, add: add, put: put, update: update, remove: remove,
    prune: prune, migrate: migrate };
})(self);
