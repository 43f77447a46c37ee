// gainshape's curve editor (an anywidget front end): draws what Python sends
// and sends back edits. Python checks every edit and answers with the points
// and the realized filter; the next drag goes out only once the last one is
// answered, so a slow design never builds a queue.

const SVG = "http://www.w3.org/2000/svg";
// Okabe & Ito's colour-blind-safe palette; before/after also differ in dash
const COLOR = {
  requested: "#E69F00", realized: "#0072B2", selected: "#D55E00",
  tolerance: "#009E73", before: "#7a7a7a", after: "#0072B2", ink: "#222",
};
const DB_FLOOR = -80;
const HELP = "Drag a point · click empty space to add · Shift-click a point to remove · " +
  "keys: ←/→ frequency, ↑/↓ gain (Shift: larger steps), PageUp/PageDown choose a point, Delete removes";

function node(tag, attrs = {}, parent = null, ns = SVG) {
  const el = ns ? document.createElementNS(ns, tag) : document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) el.setAttribute(k, v);
  if (parent) parent.appendChild(el);
  return el;
}
const html = (tag, attrs = {}, parent = null) => node(tag, attrs, parent, null);

function niceTicks(lo, hi, count = 5) {
  const span = hi - lo || 1;
  const raw = span / count, mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => span / s <= count) || 10 * mag;
  const ticks = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * span; t += step) ticks.push(+t.toPrecision(12));
  return ticks;
}
const fmt = (v) => (Math.abs(v) >= 1e4 || (Math.abs(v) < 1e-3 && v !== 0) ? v.toExponential(1) : +v.toPrecision(4)).toString();

// A plot area: data -> pixel mappings, axes, and a clipped group to draw in.
function makePanel(svg, box, x, y, labels) {
  const [left, top, width, height] = box;
  const sx = x.log
    ? (v) => left + (Math.log10(v) - Math.log10(x.min)) / (Math.log10(x.max) - Math.log10(x.min)) * width
    : (v) => left + (v - x.min) / (x.max - x.min) * width;
  const sy = (v) => top + height - (Math.min(Math.max(v, y.min), y.max) - y.min) / (y.max - y.min) * height;
  const ix = x.log
    ? (px) => 10 ** (Math.log10(x.min) + (px - left) / width * (Math.log10(x.max) - Math.log10(x.min)))
    : (px) => x.min + (px - left) / width * (x.max - x.min);
  const iy = (py) => y.min + (top + height - py) / height * (y.max - y.min);
  const g = node("g", { class: "gs-panel" }, svg);
  node("rect", { x: left, y: top, width, height, class: "gs-frame" }, g);
  const xt = x.log ? logTicks(x.min, x.max) : niceTicks(x.min, x.max);
  for (const t of xt) {
    node("line", { x1: sx(t), x2: sx(t), y1: top, y2: top + height, class: "gs-grid" }, g);
    if (labels.xTicks !== false) node("text", { x: sx(t), y: top + height + 13, class: "gs-tick", "text-anchor": "middle" }, g).textContent = fmt(t);
  }
  for (const t of niceTicks(y.min, y.max, labels.yCount || 5)) {
    node("line", { x1: left, x2: left + width, y1: sy(t), y2: sy(t), class: "gs-grid" }, g);
    node("text", { x: left - 5, y: sy(t) + 4, class: "gs-tick", "text-anchor": "end" }, g).textContent = fmt(t);
  }
  if (labels.x) node("text", { x: left + width / 2, y: top + height + 28, class: "gs-label", "text-anchor": "middle" }, g).textContent = labels.x;
  if (labels.y) node("text", { x: 12, y: top + height / 2, class: "gs-label", "text-anchor": "middle", transform: `rotate(-90 12 ${top + height / 2})` }, g).textContent = labels.y;
  const clipId = "gs-clip-" + Math.random().toString(36).slice(2);
  const clip = node("clipPath", { id: clipId }, g);
  node("rect", { x: left, y: top, width, height }, clip);
  const inner = node("g", { "clip-path": `url(#${clipId})` }, g);
  return { sx, sy, ix, iy, g: inner, outer: g, box };  // outer: not clipped (whole handles)
}

function logTicks(lo, hi) {
  const ticks = [];
  for (let e = Math.floor(Math.log10(lo)); e <= Math.ceil(Math.log10(hi)); e++) {
    const t = 10 ** e;
    if (t >= lo * 0.999 && t <= hi * 1.001) ticks.push(+t.toPrecision(6));
  }
  return ticks;
}

function path(panel, xs, ys, attrs) {
  let d = "";
  for (let i = 0; i < xs.length; i++) d += (i ? "L" : "M") + panel.sx(xs[i]).toFixed(1) + "," + panel.sy(ys[i]).toFixed(1);
  return node("path", { d, fill: "none", ...attrs }, panel.g);
}

function area(panel, xs, ys, base, attrs) {
  let d = "M" + panel.sx(xs[0]).toFixed(1) + "," + panel.sy(base).toFixed(1);
  for (let i = 0; i < xs.length; i++) d += "L" + panel.sx(xs[i]).toFixed(1) + "," + panel.sy(ys[i]).toFixed(1);
  d += "L" + panel.sx(xs[xs.length - 1]).toFixed(1) + "," + panel.sy(base).toFixed(1) + "Z";
  return node("path", { d, ...attrs }, panel.g);
}

const toDb = (g) => Math.max(20 * Math.log10(Math.max(g, 1e-12)), DB_FLOOR);
const fromDb = (d) => (d <= DB_FLOOR + 0.5 ? 0 : 10 ** (d / 20));
const span = (values, pad = 0.08) => {
  const lo = Math.min(...values), hi = Math.max(...values), extra = (hi - lo || Math.abs(hi) || 1) * pad;
  return { min: lo - extra, max: hi + extra };
};

function render({ model, el }) {
  const root = html("div", { class: "gs-editor" }, el);
  // tool bar
  const bar = html("div", { class: "gs-bar" }, root);
  const shapeLabel = html("label", {}, bar); shapeLabel.textContent = "Start from ";
  const shapeSelect = html("select", { "aria-label": "shape to start from" }, shapeLabel);
  // the control names a shape only while that shape is on screen, unedited
  html("option", { value: "" }, shapeSelect).textContent = "choose a shape";
  for (const s of model.get("shapes")) html("option", { value: s }, shapeSelect).textContent = s;
  shapeSelect.value = "";
  const startButton = html("button", { type: "button" }, bar); startButton.textContent = "Use shape";
  const scaleGroup = html("span", { class: "gs-scale", role: "group", "aria-label": "gain axis" }, bar);
  const scaleButtons = ["gain", "dB"].map((s) => {
    const b = html("button", { type: "button", "data-scale": s }, scaleGroup);
    b.textContent = s === "gain" ? "gain 0–1" : "gain in dB";
    b.addEventListener("click", () => { model.set("scale", s); model.save_changes(); });
    return b;
  });
  const removeButton = html("button", { type: "button" }, bar); removeButton.textContent = "Remove point";
  // copy and save: in the row when it has room, behind "Copy or save" when the editor is narrow
  const more = html("details", { class: "gs-more", open: "" }, bar);
  const moreLabel = html("summary", {}, more); moreLabel.textContent = "Copy or save";
  const moreBox = html("span", { class: "gs-more-box" }, more);
  const copyButton = html("button", { type: "button" }, moreBox); copyButton.textContent = "Copy as code";
  const pathInput = html("input", { type: "text", class: "gs-path", "aria-label": "recipe file" }, moreBox);
  const saveButton = html("button", { type: "button" }, moreBox); saveButton.textContent = "Save recipe";
  // the selected point as numbers
  const pointRow = html("div", { class: "gs-point" }, root);
  const pointName = html("span", {}, pointRow);
  const freqLabel = html("label", {}, pointRow); freqLabel.append("frequency ");
  const freqInput = html("input", { type: "number", step: "any", min: "0", "aria-label": "frequency of the selected point (Hz)" }, freqLabel);
  freqLabel.append(" Hz");
  const gainLabel = html("label", {}, pointRow); gainLabel.append("gain ");
  const gainInput = html("input", { type: "number", step: "0.01", min: "0", max: "1", "aria-label": "gain of the selected point (0 to 1)" }, gainLabel);
  const summaryRow = html("div", { class: "gs-summary", "aria-label": "the realized filter in one line" }, root);
  // the frequencies shown: zoom in to edit close points (a notch comb), back to the whole range
  const zoomRow = html("div", { class: "gs-point gs-zoom" }, root);
  const zoomLabel = html("label", {}, zoomRow); zoomLabel.append("show ");
  const zoomLow = html("input", { type: "number", step: "any", min: "0", "aria-label": "lowest frequency shown (Hz)" }, zoomLabel);
  zoomLabel.append(" to ");
  const zoomHigh = html("input", { type: "number", step: "any", min: "0", "aria-label": "highest frequency shown (Hz)" }, zoomLabel);
  zoomLabel.append(" Hz");
  const zoomButton = html("button", { type: "button" }, zoomRow); zoomButton.textContent = "Show";
  const wholeButton = html("button", { type: "button" }, zoomRow); wholeButton.textContent = "Whole range";
  const status = html("div", { class: "gs-message", role: "status", "aria-live": "polite" }, root);
  // plots
  const main = html("div", { class: "gs-main" }, root);
  const left = html("div", { class: "gs-left" }, main);
  const curveSvg = node("svg", { class: "gs-curve", viewBox: "0 0 620 400", tabindex: "0", role: "application", "aria-label": "gain curve: " + HELP }, left);
  // all characteristics: beside the curve when there is room, folded under the plots when narrow
  const factsBox = html("details", { class: "gs-facts", open: "" }, main);
  const factsLabel = html("summary", {}, factsBox); factsLabel.textContent = "All characteristics";
  const facts = html("div", {}, factsBox);
  const timeRow = html("div", { class: "gs-row" }, left);
  const impulseSvg = node("svg", { class: "gs-small", viewBox: "0 0 320 200" }, timeRow);
  const stepSvg = node("svg", { class: "gs-small", viewBox: "0 0 320 200" }, timeRow);
  const dataBox = html("div", { class: "gs-data" }, root);
  const help = html("div", { class: "gs-help" }, root); help.textContent = HELP;
  const codeBox = html("code", { class: "gs-code" }, root);

  // edits wait in order for the kernel's answer to the one before; a drag replaces a drag of
  // the same point still waiting (only its latest position counts), key steps all count
  let dragging = null, moved = false, serial = 0, waiting = null, pending = [], waitTimer = null, sentAt = 0;
  let curvePanel = null;

  function send(message) {
    message.serial = ++serial;
    if (["drag", "step", "add", "remove"].includes(message.do)) shapeSelect.value = "";
    if (waiting !== null) {
      const last = pending[pending.length - 1];
      if (message.do === "drag" && last && last.do === "drag" && last.index === message.index) pending[pending.length - 1] = message;
      else pending.push(message);
      return;
    }
    waiting = message.serial;
    sentAt = performance.now();
    root.dataset.busy = "1";
    clearTimeout(waitTimer);
    waitTimer = setTimeout(() => { waiting = null; flush(); }, 3000);
    model.send(message);
  }
  function flush() {
    if (pending.length) send(pending.shift()); else delete root.dataset.busy;
  }
  model.on("change:view", () => {
    const answer = model.get("view").answer;
    if (waiting !== null && answer !== undefined && answer !== null && answer >= waiting) {
      // the last edit's round trip (page -> kernel -> page), for tests and the curious
      root.dataset.roundTripMs = (performance.now() - sentAt).toFixed(0);
      root.dataset.answered = String(answer);
      waiting = null; flush();
    }
    draw();
  });
  for (const name of ["points", "selected", "scale", "message", "message_kind", "code", "channel"]) model.on("change:" + name, draw);

  const points = () => model.get("points");
  const gainToY = (g) => (model.get("scale") === "dB" ? toDb(g) : g);
  const yToGain = (v) => (model.get("scale") === "dB" ? fromDb(v) : v);

  function pointer(evt) {
    const p = curveSvg.createSVGPoint(); p.x = evt.clientX; p.y = evt.clientY;
    const q = p.matrixTransform(curveSvg.getScreenCTM().inverse());
    return { freq: curvePanel.ix(q.x), gain: Math.min(Math.max(yToGain(curvePanel.iy(q.y)), -0.05), 1.05), x: q.x, y: q.y };
  }

  function drawCurve(view) {
    curveSvg.replaceChildren();
    const s = model.get("settings");
    const dB = model.get("scale") === "dB";
    const [shownLow, shownHigh] = view.shown || [s.fmin, s.fmax];
    const x = { min: shownLow, max: shownHigh, log: true };
    const top = curvePanel = makePanel(curveSvg, [62, 30, 545, 230], x, dB ? { min: DB_FLOOR, max: 5 } : { min: 0, max: 1.05 },
      { y: dB ? "gain (dB)" : "gain", xTicks: false });
    const ys = (gs) => gs.map(gainToY);
    area(top, view.freqs, ys(view.requested), dB ? DB_FLOOR : 0, { fill: COLOR.requested, "fill-opacity": 0.25, class: "gs-requested" });
    path(top, view.freqs, ys(view.realized), { stroke: COLOR.realized, "stroke-width": 2, class: "gs-realized" });
    const pts = points(), selected = model.get("selected");
    pts.forEach(([f, g], i) => {
      if (f < shownLow * 0.999 || f > shownHigh * 1.001) return;  // outside a zoomed view
      const c = node("circle", { cx: top.sx(f), cy: top.sy(gainToY(g)), r: i === selected ? 7 : 5, class: "gs-handle" + (i === selected ? " gs-selected" : ""), "data-index": i }, top.outer);
      c.addEventListener("pointerdown", (evt) => {
        evt.stopPropagation();
        if (evt.shiftKey) { send({ do: "remove", index: i }); return; }
        dragging = i; moved = false;
        curveSvg.setPointerCapture(evt.pointerId);
        model.set("selected", i); model.save_changes();
      });
    });
    const dev = makePanel(curveSvg, [62, 272, 545, 85], x,
      (() => { const m = 1.3 * Math.max(view.tolerance, ...view.deviation.map(Math.abs)); return { min: -m, max: m }; })(),
      { x: "frequency (Hz)", y: "realized − requested", yCount: 3 });
    node("rect", { x: dev.box[0], width: dev.box[2], y: dev.sy(view.tolerance), height: dev.sy(-view.tolerance) - dev.sy(view.tolerance), fill: COLOR.tolerance, "fill-opacity": 0.18 }, dev.g);
    path(dev, view.freqs, view.deviation, { stroke: COLOR.realized, "stroke-width": 1.3 });
    // the legend above the plot, outside the data (curves at gain 1 run along the top)
    const legend = node("g", { class: "gs-legend" }, curveSvg);
    [["requested (drawn)", COLOR.requested, 0.5], ["realized", COLOR.realized, 1]].forEach(([label, color, op], k) => {
      node("rect", { x: 62 + 150 * k, y: 6, width: 14, height: 8, fill: color, "fill-opacity": op }, legend);
      node("text", { x: 81 + 150 * k, y: 14, class: "gs-tick" }, legend).textContent = label;
    });
    node("text", { x: 606, y: 268, class: "gs-tick", "text-anchor": "end" }, curveSvg).textContent = `tolerance ±${view.tolerance}`;
  }

  function drawTrace(svg, trace, title, xLabel) {
    svg.replaceChildren();
    const y = trace.limit ? { min: -trace.limit, max: trace.limit } : span(trace.values);
    const panel = makePanel(svg, [52, 22, 260, 140], span(trace.times, 0), y, { x: xLabel, yCount: 4 });
    path(panel, trace.times, trace.values, { stroke: COLOR.realized, "stroke-width": 1.5 });
    node("text", { x: 4, y: 14, class: "gs-title" }, svg).textContent = title;
    if (trace.limit) node("text", { x: 308, y: 36, class: "gs-tick", "text-anchor": "end" }, svg).textContent =
      `peak ${fmt(trace.peak)} at ${fmt(trace.peak_time)} s, off scale`;
  }

  function drawData(preview) {
    dataBox.replaceChildren();
    if (!preview) return;
    const head = html("div", { class: "gs-data-head" }, dataBox);
    const label = html("label", {}, head); label.textContent = "Channel ";
    const select = html("select", { "aria-label": "channel previewed" }, label);
    for (const c of model.get("channels")) html("option", { value: c }, select).textContent = c;
    select.value = preview.channel;
    select.addEventListener("change", () => send({ do: "channel", channel: select.value }));
    const key = html("span", { class: "gs-key" }, head);
    key.innerHTML = `<span class="gs-before">- - before</span> <span class="gs-after">— after</span>`;
    const row = html("div", { class: "gs-row" }, dataBox);
    const spec = node("svg", { class: "gs-small", viewBox: "0 0 460 200" }, row);
    const all = preview.before_db.concat(preview.after_db);
    const top = Math.max(...all), low = Math.max(Math.min(...all), top - 120);
    const sp = makePanel(spec, [62, 22, 385, 140], { min: preview.freqs[0], max: preview.freqs[preview.freqs.length - 1], log: true },
      { min: low - 3, max: top + 3 }, { x: "frequency (Hz)", y: preview.spectrum_label || "power (dB)", yCount: 4 });
    path(sp, preview.freqs, preview.before_db, { stroke: COLOR.before, "stroke-width": 1.3, "stroke-dasharray": "5 3" });
    path(sp, preview.freqs, preview.after_db, { stroke: COLOR.after, "stroke-width": 1.5 });
    node("text", { x: 62, y: 14, class: "gs-title" }, spec).textContent = "spectrum of " + preview.channel;
    const wave = node("svg", { class: "gs-small", viewBox: "0 0 460 200" }, row);
    const micro = preview.unit === "V" ? 1e6 : 1, unit = preview.unit === "V" ? "µV" : preview.unit;
    const b = preview.wave_before, a = preview.wave_after;
    const wp = makePanel(wave, [62, 22, 385, 140], span(b.times, 0), span(b.values.concat(a.values).map((v) => v * micro)),
      { x: "time (s)", y: unit, yCount: 4 });
    path(wp, b.times, b.values.map((v) => v * micro), { stroke: COLOR.before, "stroke-width": 1.3, "stroke-dasharray": "5 3" });
    path(wp, a.times, a.values.map((v) => v * micro), { stroke: COLOR.after, "stroke-width": 1.5 });
    node("text", { x: 62, y: 14, class: "gs-title" }, wave).textContent = preview.label + ", " + preview.channel;
  }

  function drawFacts(view) {
    const deviation = (view.characteristics.find(([k]) => k === "largest gain deviation") || [, ""])[1];
    summaryRow.textContent = view.describe + (deviation ? "; largest deviation " + deviation.split(" ")[0] : "");
    facts.replaceChildren();
    const table = html("table", {}, facts);
    const caption = html("caption", {}, table); caption.textContent = "The realized filter";
    for (const [k, v] of view.characteristics) {
      const tr = html("tr", {}, table);
      html("th", { scope: "row" }, tr).textContent = k;
      html("td", {}, tr).textContent = v;
    }
    const tr = html("tr", {}, table);
    html("th", { scope: "row" }, tr).textContent = "design and preview";
    html("td", {}, tr).textContent = `${view.design_ms} ms`;
  }

  function draw() {
    const view = model.get("view");
    if (!view || !view.freqs) return;
    drawCurve(view);
    drawFacts(view);
    drawTrace(impulseSvg, view.impulse, "impulse response (within 60 dB of its peak)", "time (s)");
    drawTrace(stepSvg, view.step, "step response (whole kernel)", "time (s)");
    drawData(view.preview);
    const pts = points(), i = model.get("selected"), p = pts[i];
    pointName.textContent = `Point ${i + 1} of ${pts.length}: `;
    if (p && document.activeElement !== freqInput) freqInput.value = p[0];
    if (view.shown && document.activeElement !== zoomLow && document.activeElement !== zoomHigh) {
      zoomLow.value = +view.shown[0].toPrecision(4); zoomHigh.value = +view.shown[1].toPrecision(4);
    }
    const dBScale = model.get("scale") === "dB";
    gainLabel.firstChild.textContent = dBScale ? "gain (dB) " : "gain ";
    Object.assign(gainInput, dBScale ? { step: "1", min: String(DB_FLOOR), max: "0" } : { step: "0.01", min: "0", max: "1" });
    if (p && document.activeElement !== gainInput) gainInput.value = dBScale ? toDb(p[1]).toFixed(2) : p[1];
    status.textContent = model.get("message");
    status.classList.toggle("gs-has-message", !!model.get("message"));
    status.classList.toggle("gs-done", model.get("message_kind") === "done");
    codeBox.textContent = model.get("code");
    scaleButtons.forEach((b) => b.setAttribute("aria-pressed", String(b.dataset.scale === model.get("scale"))));
    if (document.activeElement !== pathInput) pathInput.value = model.get("recipe_path");
  }

  curveSvg.addEventListener("pointermove", (evt) => {
    if (dragging === null) return;
    moved = true;
    const { freq, gain } = pointer(evt);
    const handle = curveSvg.querySelector(`circle[data-index="${dragging}"]`);
    if (handle) { handle.setAttribute("cx", curvePanel.sx(freq)); handle.setAttribute("cy", curvePanel.sy(gainToY(gain))); }
    send({ do: "drag", index: dragging, freq, gain });
  });
  curveSvg.addEventListener("pointerup", (evt) => {
    if (dragging !== null && moved) { const { freq, gain } = pointer(evt); send({ do: "drag", index: dragging, freq, gain }); }
    dragging = null;
  });
  curveSvg.addEventListener("pointerdown", (evt) => {
    if (dragging !== null || evt.target.tagName === "circle") return;
    const { freq, gain, x, y } = pointer(evt);
    const [l, t, w, h] = curvePanel.box;
    if (x >= l && x <= l + w && y >= t && y <= t + h) send({ do: "add", freq, gain });
  });
  curveSvg.addEventListener("keydown", (evt) => {
    const pts = points(), i = model.get("selected"), p = pts[i];
    if (!p) return;
    const big = evt.shiftKey;
    let freqSteps = 0, gainSteps = 0;  // relative: Python moves the point from where it holds it
    if (evt.key === "ArrowLeft" || evt.key === "ArrowRight") freqSteps = evt.key === "ArrowRight" ? 1 : -1;
    else if (evt.key === "ArrowUp" || evt.key === "ArrowDown") gainSteps = evt.key === "ArrowUp" ? 1 : -1;
    else if (evt.key === "PageUp" || evt.key === "PageDown") {
      model.set("selected", (i + (evt.key === "PageUp" ? 1 : pts.length - 1)) % pts.length); model.save_changes();
      evt.preventDefault(); return;
    } else if (evt.key === "Delete" || evt.key === "Backspace") { send({ do: "remove", index: i }); evt.preventDefault(); return; }
    else return;
    evt.preventDefault();
    send({ do: "step", index: i, freq_steps: freqSteps, gain_steps: gainSteps, big });
  });
  const typedGain = () => (model.get("scale") === "dB" ? fromDb(Number(gainInput.value)) : gainInput.value);
  const typed = () => send({ do: "drag", index: model.get("selected"), freq: freqInput.value, gain: typedGain() });
  // Enter applies a field's value; stopped here so that JupyterLab's own Enter handling does not eat it
  const onEnter = (inputs, action) => inputs.forEach((input) => input.addEventListener("keydown", (evt) => {
    if (evt.key !== "Enter") return;
    evt.preventDefault(); evt.stopPropagation(); action();
  }));
  onEnter([freqInput, gainInput], typed);
  freqInput.addEventListener("change", typed);
  gainInput.addEventListener("change", typed);
  const zoom = () => send({ do: "zoom", low: zoomLow.value, high: zoomHigh.value });
  zoomButton.addEventListener("click", zoom);
  onEnter([zoomLow, zoomHigh], zoom);
  wholeButton.addEventListener("click", () => send({ do: "zoom" }));
  startButton.addEventListener("click", () => { if (shapeSelect.value) send({ do: "start", shape: shapeSelect.value }); });
  removeButton.addEventListener("click", () => send({ do: "remove", index: model.get("selected") }));
  saveButton.addEventListener("click", () => send({ do: "save", path: pathInput.value }));
  copyButton.addEventListener("click", async () => {
    const code = model.get("code");
    try { await navigator.clipboard.writeText(code); status.textContent = "Copied: " + code; }
    catch (err) {
      const range = document.createRange(); range.selectNodeContents(codeBox);
      const sel = window.getSelection(); sel.removeAllRanges(); sel.addRange(range);
      status.textContent = "The browser did not allow copying; the line below is selected: press Ctrl+C.";
    }
  });
  // narrow (under 900 px, as in JupyterLab's output area): the copy/save menu and the full
  // table fold away, the one-line summary under the toolbar keeps the numbers in sight
  let narrow = null, barWidth = null;
  const barRows = () => new Set([...bar.children].map((c) => {
    const b = c.getBoundingClientRect(); return Math.round((b.top + b.height / 2) / 8);
  })).size;
  new ResizeObserver(() => {
    const width = root.getBoundingClientRect().width, now = width < 900;
    if (now !== narrow) { narrow = now; root.classList.toggle("gs-narrow", narrow); factsBox.open = !narrow; }
    if (width === barWidth) return;
    barWidth = width;
    // copy and save fold behind their menu whenever the tool bar would take a second row
    root.classList.remove("gs-folded"); more.open = true;
    if (narrow || barRows() > 1) { root.classList.add("gs-folded"); more.open = false; }
  }).observe(root);
  draw();
}

export default { render };
