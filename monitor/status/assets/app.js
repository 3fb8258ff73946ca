// taut status page: one EventSource, a snapshot on connect, then one update per
// journal entry. Every update carries rev = previous rev + 1; on a gap the page
// reconnects and starts again from a fresh snapshot.
"use strict";

(function () {
  const STATES = ["alarm", "off-target", "settling", "steady", "quiet"];
  const LABEL = { alarm: "alarm", "off-target": "off target", settling: "settling", steady: "steady", quiet: "quiet" };
  const LOST_AFTER_MS = 10000; // a connection down this long makes the data stale
  const TICK_MS = 5000;
  const WALL_CARDS = 6; // cards in one row of the wall display

  const state = {
    snap: null,           // the last snapshot, kept up to date by updates
    index: new Map(),     // string id -> position in snap.strings
    lastReadingAt: null,  // local ms of the latest reading's arrival
    arrived: new Map(),   // string id -> local ms of its latest reading's arrival
    connected: false,
    lostSince: null,
    pending: false,
  };

  const $ = (id) => document.getElementById(id);

  function el(tag, attrs, ...kids) {
    const e = document.createElement(tag);
    for (const [k, v] of Object.entries(attrs || {})) {
      if (v === undefined || v === null || v === false) continue;
      if (k === "class") e.className = v; else e.setAttribute(k, v === true ? "" : v);
    }
    for (const k of kids) if (k !== null && k !== undefined) e.append(k);
    return e;
  }

  function shape(name) {
    const svg = document.createElementNS("http://www.w3.org/2000/svg", "svg");
    svg.setAttribute("class", "shape");
    svg.setAttribute("aria-hidden", "true");
    const use = document.createElementNS("http://www.w3.org/2000/svg", "use");
    use.setAttribute("href", "#shape-" + name);
    svg.append(use);
    return svg;
  }

  // noteOf is the note name when it adds something to the string id ("C4a" → "C4").
  function noteOf(s) {
    return s.note && s.note !== s.id ? el("span", { class: "note" }, s.note) : null;
  }

  function highTensionBadge(level) {
    return el("span", { class: "state margin-" + level }, shape("margin"), level === "alarm" ? "tension over limit" : "high tension");
  }

  function stateBadge(s) {
    return el("span", { class: "state st-" + s }, shape(s), LABEL[s] || s);
  }

  // Number formats: a real minus sign, units spelt as people write them.
  function signed(v, digits) {
    const t = Math.abs(v).toFixed(digits);
    if (Number(t) === 0) return "±" + t;
    return (v < 0 ? "−" : "+") + t;
  }
  const NB = "\u00a0"; // a number never wraps away from its unit
  const fmtCents = (c) => signed(c, 1) + NB + "¢";
  const fmtRate = (r) => signed(r, 1) + NB + "¢/h";
  const fmtN = (n) => Math.round(n).toLocaleString("en") + NB + "N";
  const fmtPct = (m) => Math.round(m * 100) + NB + "%";
  const fmtHz = (f) => f.toFixed(f < 100 ? 2 : 1) + NB + "Hz";

  function fmtAge(ms) {
    const s = Math.max(0, Math.round(ms / 1000));
    if (s < 60) return s + NB + "s ago";
    const m = Math.round(s / 60);
    if (m < 90) return m + NB + "min ago";
    const h = m / 60;
    return (h < 10 ? h.toFixed(1) : Math.round(h)) + NB + "h ago";
  }

  function fmtDuration(ms) {
    const m = Math.round(ms / 60000);
    if (m < 1) return "under a minute";
    if (m < 90) return m + NB + "min";
    return (m / 60).toFixed(1) + NB + "h";
  }

  function fmtClock(iso) {
    const d = new Date(iso);
    if (isNaN(d)) return "";
    return d.toLocaleTimeString([], { hour: "2-digit", minute: "2-digit" });
  }

  function marginLevel(s) {
    const snap = state.snap;
    if (!s.heard || !s.margin) return "";
    if (s.margin >= snap.margin_alarm) return "alarm";
    if (s.margin >= snap.margin_warn) return "warn";
    return "";
  }

  // Rank of concern: lower first. null = needs no attention.
  function concern(s) {
    const m = marginLevel(s);
    if (s.state === "alarm") return 0;
    if (m === "alarm") return 1;
    if (m === "warn") return 2; // a safety matter ranks above a tuning one
    if (s.state === "off-target") return 3;
    if (s.state === "settling") return 4;
    return null;
  }

  function why(s) {
    const pct = s.margin ? fmtPct(s.margin) : "";
    if (s.state === "alarm") {
      switch (s.reason) {
        case "margin": return "Tension at " + pct + " of the estimated breaking load.";
        case "jump": return "Sudden pitch change: check for a slipped tuning pin or a broken string.";
        case "partials": return "Partials have shifted: check the winding and the bridge pin.";
        default: return "Alarm" + (s.reason ? " (" + s.reason + ")" : "") + ": see the recent events and the journal.";
      }
    }
    if (marginLevel(s)) return "Tension at " + pct + " of the estimated breaking load.";
    if (s.state === "off-target") {
      return "Settled " + Math.abs(s.cents).toFixed(1) + NB + "¢ " + (s.cents < 0 ? "flat" : "sharp") + " of its target.";
    }
    if (s.state === "settling") return "Still moving at " + fmtRate(s.rate_cents_per_hour) + ".";
    return "";
  }

  function ageOf(s) {
    const t = state.arrived.get(s.id);
    return t === undefined ? "" : fmtAge(Date.now() - t);
  }

  function renderTally(strings) {
    const counts = Object.fromEntries(STATES.map((s) => [s, 0]));
    for (const s of strings) counts[s.state] = (counts[s.state] || 0) + 1;
    const items = STATES.map((s) =>
      el("li", { class: "st-" + s + (counts[s] ? "" : " zero"), "data-state": s },
        shape(s), el("b", {}, String(counts[s])), el("span", {}, LABEL[s])));
    $("tally").replaceChildren(...items);
  }

  function renderAttention(strings) {
    const list = strings
      .map((s, i) => ({ s, i, rank: concern(s) }))
      .filter((x) => x.rank !== null)
      .sort((a, b) => a.rank - b.rank || a.i - b.i);
    // A wall display cannot scroll: one row of cards, the rest named on one line.
    const wall = document.documentElement.classList.contains("display-wall");
    const shown = wall && list.length > WALL_CARDS ? list.slice(0, WALL_CARDS - 1) : list;
    const cards = shown.map(({ s }) => {
      const figs = [fmtCents(s.cents) + " from target", fmtRate(s.rate_cents_per_hour)];
      if (s.tension_n) figs.push(fmtN(s.tension_n));
      const age = ageOf(s);
      if (age) figs.push("heard " + age);
      const m = marginLevel(s);
      const marginFirst = m && s.state !== "alarm"; // the card is about the tension
      return el("li", { class: "card " + (marginFirst ? "margin-" + m : "st-" + s.state), "data-string": s.id },
        el("div", { class: "id" }, s.id, noteOf(s)),
        el("div", { class: "badges" }, marginFirst ? highTensionBadge(m) : null, stateBadge(s.state)),
        el("p", { class: "why" }, why(s)),
        el("p", { class: "figs" }, figs.join(" · ")));
    });
    if (shown.length < list.length) cards.push(moreCard(list.slice(shown.length).map((x) => x.s)));
    $("attention").replaceChildren(...cards);
    $("all-clear").hidden = cards.length > 0 || !state.snap.heard;
  }

  function moreCard(rest) {
    const byState = new Map();
    for (const s of rest) {
      const k = marginLevel(s) && s.state !== "alarm" ? "margin" : s.state;
      if (!byState.has(k)) byState.set(k, []);
      byState.get(k).push(s.id);
    }
    const MAX_IDS = 8; // keep the card one row high; the tiles show every string anyway
    const lines = [...byState].map(([k, ids]) =>
      el("p", { class: "why" }, k === "margin" ? highTensionBadge("warn") : stateBadge(k),
        " " + ids.slice(0, MAX_IDS).join(" ") + (ids.length > MAX_IDS ? " and " + (ids.length - MAX_IDS) + " more" : "")));
    return el("li", { class: "card more" }, el("div", { class: "id" }, "+" + rest.length + " more"), ...lines);
  }

  function devBar(cents) {
    const bar = el("span", { class: "bar", "aria-hidden": "true" });
    const i = el("i");
    const x = Math.max(-50, Math.min(50, cents)) / 100; // ±50 ¢ fills half the bar
    i.style.left = (50 + Math.min(0, x) * 100) + "%";
    i.style.width = Math.max(2, Math.abs(x) * 100) + "%";
    bar.append(i);
    return bar;
  }

  function renderRows(strings) {
    const rows = strings.map((s) => {
      const m = marginLevel(s);
      const cls = [s.state === "alarm" ? "row-alarm" : "", s.heard ? "" : "unheard", m ? "margin-" + m : ""].filter(Boolean).join(" ");
      const dash = "–";
      return el("tr", { class: cls, "data-string": s.id, "data-state": s.state },
        el("th", { scope: "row" }, s.id, noteOf(s)),
        el("td", {}, stateBadge(s.state)),
        // On a phone the drift and tension columns fold under cents and margin (.narrow).
        el("td", { class: "num" }, s.heard ? el("span", { class: "dev st-" + s.state }, devBar(s.cents), fmtCents(s.cents)) : dash,
          s.heard ? el("small", { class: "narrow" }, fmtRate(s.rate_cents_per_hour)) : null),
        el("td", { class: "num wide" }, s.heard ? fmtRate(s.rate_cents_per_hour) : dash),
        el("td", { class: "num wide" }, s.heard && s.tension_n ? fmtN(s.tension_n) : dash),
        el("td", { class: "num margin" }, s.heard && s.margin ? el("span", {}, m ? shape("margin") : null, " " + fmtPct(s.margin)) : dash,
          s.heard && s.tension_n ? el("small", { class: "narrow" }, fmtN(s.tension_n)) : null),
        el("td", { class: "num opt" }, s.heard && s.f0_hz ? fmtHz(s.f0_hz) : fmtHz(s.target_hz) + " target"),
        el("td", { class: "num opt" }, ageOf(s) || "not yet"));
    });
    $("rows").replaceChildren(...rows);
  }

  function renderTiles(strings) {
    const tiles = strings.map((s) =>
      el("li", { class: "tile st-" + s.state + (s.heard ? "" : " unheard"), "data-string": s.id },
        el("span", { class: "id" }, s.id),
        stateBadge(s.state),
        el("span", { class: "cents" }, s.heard ? fmtCents(s.cents) : "–")));
    $("tiles").replaceChildren(...tiles);
    $("tiles").classList.toggle("many", strings.length > 60); // a piano: smaller tiles, shape without the word
  }

  function eventText(e) {
    switch (e.kind) {
      case "state": {
        const from = e.prev_state ? (LABEL[e.prev_state] || e.prev_state) + " → " : "";
        return e.string + ": " + from + (LABEL[e.state] || e.state) + (e.reason ? " (" + e.reason + ")" : "");
      }
      case "fault": return "Fault" + (e.reason ? " in " + e.reason : "") + (e.detail ? ": " + e.detail : "");
      case "gap": return "Audio gap" + (e.detail ? ": " + e.detail : "");
      case "clock": return "Wall clock jumped" + (e.detail ? ": " + e.detail : "");
      case "start": return "Listener started" + (e.detail ? ": " + e.detail : "");
      case "stop": return "Listener stopped" + (e.detail ? ": " + e.detail : "");
      default: return e.kind + (e.detail ? ": " + e.detail : "");
    }
  }

  function renderEvents(events) {
    const items = events.slice(-15).reverse().map((e) =>
      el("li", { class: e.state ? "st-" + e.state : "" },
        el("time", { datetime: e.time }, fmtClock(e.time)),
        e.state ? shape(e.state) : null,
        el("span", {}, eventText(e))));
    if (!items.length) items.push(el("li", { class: "empty" }, "No events yet."));
    $("events").replaceChildren(...items);
  }

  function renderCaution(strings) {
    const high = strings.filter((s) => marginLevel(s)).sort((a, b) => b.margin - a.margin);
    $("caution").hidden = high.length === 0;
    if (!high.length) return;
    const top = high[0];
    const others = high.length === 1 ? "" : " (" + high.length + " strings above " + fmtPct(state.snap.margin_warn) + ")";
    $("caution-text").textContent = top.id + " is at " + fmtPct(top.margin) + " of its estimated breaking load" + others + ".";
    const bases = [...new Set(high.map((s) => [s.material, s.strength_basis].filter(Boolean).join(": ")).filter(Boolean))];
    $("caution-basis").textContent = bases.length ? "strength basis: " + bases.join("; ") : "no strength basis given";
  }

  function renderStale() {
    const snap = state.snap;
    const now = Date.now();
    const lost = state.lostSince !== null && now - state.lostSince >= LOST_AFTER_MS;
    const quietMs = state.lastReadingAt === null ? null : now - state.lastReadingAt;
    const old = quietMs !== null && quietMs >= snap.stale_after_s * 1000;
    $("stale").hidden = !(lost || old);
    $("waiting").hidden = lost || snap.heard || state.lastReadingAt !== null;
    if (lost) {
      $("stale-title").textContent = "Data is stale: connection lost.";
      $("stale-text").textContent = "The page cannot reach the listener (for " + fmtDuration(now - state.lostSince) +
        "). The figures below are the last ones received; it keeps trying to reconnect.";
    } else if (old) {
      $("stale-title").textContent = "Data is stale: no reading for " + fmtDuration(quietMs) + ".";
      $("stale-text").textContent = "Readings are expected at least every " + fmtDuration(snap.stale_after_s * 1000) +
        ". The figures below are the last known values; check that the listener is running and can hear the strings.";
    }
    document.body.classList.toggle("is-stale", lost || old);
  }

  function renderLink() {
    const link = $("link");
    link.classList.toggle("live", state.connected);
    link.classList.toggle("lost", !state.connected && state.lostSince !== null && Date.now() - state.lostSince >= LOST_AFTER_MS);
    $("link-text").textContent = state.connected ? "connected" : state.lostSince === null ? "connecting…" : "reconnecting…";
  }

  function render() {
    state.pending = false;
    const snap = state.snap;
    if (!snap) return;
    $("no-data").hidden = true;
    const strings = snap.strings;
    renderTally(strings);
    renderAttention(strings);
    renderRows(strings);
    renderTiles(strings);
    renderEvents(snap.events);
    renderCaution(strings);
    renderStale();
    renderLink();
    $("reference").textContent = "A4 = " + snap.reference_hz + " Hz";
  }

  function schedule() {
    if (state.pending) return;
    state.pending = true;
    setTimeout(render, 50); // coalesce bursts of updates into one redraw
  }

  function applySnapshot(snap) {
    const now = Date.now();
    state.snap = snap;
    state.index = new Map(snap.strings.map((s, i) => [s.id, i]));
    state.arrived = new Map();
    for (const s of snap.strings) if (s.heard) state.arrived.set(s.id, now - (s.age_s || 0) * 1000);
    state.lastReadingAt = snap.heard ? now - (snap.since_reading_s || 0) * 1000 : null;
    schedule();
  }

  function applyUpdate(u) {
    const snap = state.snap;
    if (u.rev !== snap.rev + 1) return false;
    snap.rev = u.rev;
    snap.seq = Math.max(snap.seq, u.seq);
    snap.unmatched = u.unmatched;
    const now = Date.now();
    if (u.string) {
      const i = state.index.get(u.string.id);
      if (i !== undefined) snap.strings[i] = u.string;
      if (u.string.heard) state.arrived.set(u.string.id, now - (u.string.age_s || 0) * 1000);
    }
    if (u.reading) { state.lastReadingAt = now; snap.heard = true; }
    if (u.event) {
      snap.events.push(u.event);
      if (snap.events.length > 50) snap.events.shift();
    }
    schedule();
    return true;
  }

  let source = null;
  function connect() {
    if (source) source.close();
    source = new EventSource("/api/events");
    source.addEventListener("open", () => {
      state.connected = true; state.lostSince = null; schedule();
    });
    source.addEventListener("snapshot", (ev) => applySnapshot(JSON.parse(ev.data)));
    source.addEventListener("update", (ev) => {
      if (!state.snap) return;
      if (!applyUpdate(JSON.parse(ev.data))) connect(); // missed something: start over
    });
    source.addEventListener("error", () => {
      state.connected = false;
      if (state.lostSince === null) state.lostSince = Date.now();
      // The browser retries by itself unless the server refused the stream.
      if (source.readyState === EventSource.CLOSED) setTimeout(connect, 5000);
      schedule();
    });
  }

  // The page carries the state at the time it was served: draw it at once, then follow the stream.
  const initial = document.getElementById("initial");
  if (initial && initial.textContent.trim()) {
    applySnapshot(JSON.parse(initial.textContent));
    render();
  }
  connect();
  setInterval(() => { if (state.snap) render(); else renderLink(); }, TICK_MS);
})();
