// matchbench page module: pointer and keyboard input become websocket
// messages; the server answers with drawn fragments that replace nodes in
// place. No framework, no build step; all drawing and maths are on the
// server.

const body = document.body;
const token = body.dataset.token;
const canEdit = body.dataset.canEdit === "true";
let version = Number(body.dataset.version || 0);
let ws = null;
let nextID = 1;
let retryMs = 500;
let selectedMarker = null;
// A plain form (re-issuing the links) takes the page elsewhere; the reload
// the server then asks of every page on the old links must not overtake it.
let leaving = false;

const SVGNS = "http://www.w3.org/2000/svg";

function $(sel, root = document) { return root.querySelector(sel); }

function setStatus(text, cls) {
	const el = $("#live-status");
	if (!el) return;
	el.textContent = text;
	el.className = "live " + (cls || "");
}

function notice(text) {
	const el = $("#notice");
	if (!el) return;
	el.textContent = text;
	el.hidden = !text;
	if (text) {
		clearTimeout(notice.timer);
		notice.timer = setTimeout(() => { el.hidden = true; }, 8000);
	}
}

// viewOnly says why a gesture that would change the session does nothing
// on a view link.
function viewOnly(what) {
	notice(`This is a view link: ${what} needs the edit link. You can still zoom, pick plots and read every figure.`);
}

// ---- websocket ----

function connect() {
	if (!token) return;
	const proto = location.protocol === "https:" ? "wss:" : "ws:";
	ws = new WebSocket(`${proto}//${location.host}/s/${token}/ws`);
	ws.addEventListener("open", () => {
		retryMs = 500;
		setStatus(canEdit ? "live · editing" : "live · watching", "on");
		send({ type: "hello", v: version });
		viewInFlight = false;
		if (!isDefaultView()) sendView();
	});
	ws.addEventListener("message", (ev) => {
		let msg;
		try { msg = JSON.parse(ev.data); } catch { return; }
		handle(msg);
	});
	ws.addEventListener("close", () => {
		setStatus("reconnecting…", "off");
		setTimeout(connect, retryMs);
		retryMs = Math.min(retryMs * 2, 8000);
	});
}

function send(msg) {
	if (!ws || ws.readyState !== WebSocket.OPEN) return false;
	if (msg.id === undefined) msg.id = nextID++;
	if (msg.v === undefined) msg.v = version;
	ws.send(JSON.stringify(msg));
	return true;
}

function change(ch) { return send({ type: "change", change: ch }); }

function handle(msg) {
	switch (msg.type) {
	case "update":
		if (typeof msg.v === "number") { version = msg.v; body.dataset.version = String(version); }
		updates.push(msg);
		if (!animating) nextUpdate();
		break;
	case "ack":
		if (typeof msg.v === "number" && msg.v > version) { version = msg.v; body.dataset.version = String(version); }
		if (typing.has(msg.id)) typingOK(msg.id);
		break;
	case "error":
		if (typing.has(msg.id)) { typingError(msg.id, msg.msg); break; }
		if (msg.id === viewMsgID) { viewInFlight = false; }
		notice(msg.msg || "the server refused the change");
		break;
	case "view":
		(msg.frags || []).forEach(applyFrag);
		restoreSelection();
		afterFrags();
		if (msg.id === viewMsgID) {
			viewInFlight = false;
			if (viewDirty) sendView();
		}
		break;
	case "reload":
		if (!leaving) location.reload();
		break;
	case "progress":
		showProgress(msg);
		break;
	}
}

// Updates land in order: one that comes while an animation plays waits
// for it, so an older step's fragments never overwrite a newer one's.
const updates = [];
let animating = false;

function nextUpdate() {
	while (updates.length) {
		const msg = updates.shift();
		if (msg.anim && !document.hidden) {
			animating = true;
			playAnimation(msg.anim, () => {
				(msg.frags || []).forEach(applyFrag);
				restoreSelection();
				afterFrags();
				animating = false;
				nextUpdate();
			});
			return;
		}
		(msg.frags || []).forEach(applyFrag);
		restoreSelection();
		afterFrags();
	}
}

// afterFrags runs after fragments land: the upload messages come back, the
// export links carry the view, and a chart drawn for an older view than the
// page's asks for the page's own again.
function afterFrags() {
	showUploadLog();
	restoreKept();
	updateExportLinks();
	const svg = chartSVG();
	if (svg && !isDefaultView() && (svg.dataset.tag || "") !== view.vid && !viewInFlight) sendView();
	clearPreview();
}

// showProgress shows a running search's progress bar and status.
function showProgress(msg) {
	const row = $("#search-progress-row");
	if (!row) return;
	row.hidden = false;
	const bar = $("#search-progress");
	if (bar && msg.total > 0) { bar.max = msg.total; bar.value = msg.done; }
	const st = $("#search-status");
	if (st) st.textContent = msg.msg || (msg.total > 0 ? `${Math.round(100 * msg.done / msg.total)} %` : "");
	const c = $("#search-cancel");
	if (c) c.hidden = !msg.running;
	if (bar) bar.hidden = !msg.running;
}

// applyFrag replaces the element whose id is frag.id with frag.html. SVG
// fragments are parsed as SVG so that they land in the SVG namespace.
// pending holds fragments held back while the user is typing or sliding
// inside the element they would replace; they land when editing ends.
const pending = new Map();
let sliding = false;

function editingInside(el) {
	const a = document.activeElement;
	if (!a || !el.contains(a)) return false;
	return sliding || (a.tagName === "INPUT" && a.type === "text");
}

function flushPending() {
	const frags = [...pending.values()];
	pending.clear();
	frags.forEach(applyFrag);
	restoreSelection();
}

function applyFrag(frag) {
	const old = document.getElementById(frag.id);
	if (!old) return;
	// A part's value being typed: the panel lands (its figures answer the
	// typing) and the field keeps what is being typed, its caret and focus.
	const a = document.activeElement;
	let keep = null;
	if (!frag.svg && !sliding && a && old.contains(a) && a.dataset && a.dataset.partValue) {
		keep = { sel: `[data-part-value="${CSS.escape(a.dataset.partValue)}"]`, value: a.value, start: a.selectionStart, end: a.selectionEnd, cls: a.className };
	} else if (!frag.svg && editingInside(old)) {
		pending.set(frag.id, frag);
		return;
	}
	let node;
	if (frag.svg) {
		const doc = new DOMParser().parseFromString(`<svg xmlns="${SVGNS}">${frag.html}</svg>`, "image/svg+xml");
		const el = doc.documentElement.firstElementChild;
		if (!el) return;
		node = document.importNode(el, true);
	} else {
		const t = document.createElement("template");
		t.innerHTML = frag.html;
		node = t.content.firstElementChild;
		if (!node) return;
	}
	if (frag.inner) {
		old.replaceChildren(...node.childNodes);
	} else {
		old.replaceWith(node);
	}
	if (keep) {
		const el = document.querySelector(keep.sel);
		if (el) {
			el.value = keep.value;
			el.className = keep.cls;
			el.focus();
			try { el.setSelectionRange(keep.start, keep.end); } catch { /* not a text field */ }
		}
	}
}

// ---- animation of matching steps: frames of SVG for one layer ----

function playAnimation(anim, done) {
	const frames = anim.frames || [];
	if (!frames.length) { done(); return; }
	const ms = anim.ms || 600;
	const t0 = performance.now();
	const step = (now) => {
		const i = Math.max(0, Math.min(frames.length - 1, Math.floor((now - t0) / ms * frames.length)));
		frames[i].forEach(applyFrag);
		if (i < frames.length - 1) requestAnimationFrame(step);
		else done();
	};
	requestAnimationFrame(step);
}

// ---- chart interaction ----

function chartSVG() { return $("#chart svg"); }

// toGamma turns a pointer position into Γ on the chart as drawn: its
// scale and the Γ at its middle (a zoomed chart may be panned) are on the
// root element; getScreenCTM takes in any preview transform of a zoom.
function toGamma(svg, clientX, clientY) {
	const pt = svg.createSVGPoint();
	pt.x = clientX; pt.y = clientY;
	const p = pt.matrixTransform(svg.getScreenCTM().inverse());
	const k = Number(svg.dataset.gammaScale || svg.getAttribute("data-gamma-scale"));
	const [cre, cim] = (svg.dataset.gammaCentre || "0 0").split(" ").map(Number);
	return { re: cre + p.x / k, im: cim - p.y / k };
}

function markerIDOf(el, prefix) {
	const g = el.closest(`[id^="${prefix}"]`);
	return g ? g.id.slice(prefix.length) : null;
}

function select(id) {
	selectedMarker = id;
	restoreSelection();
}

function restoreSelection() {
	document.querySelectorAll("#readout-body tr[data-marker]").forEach((tr) => {
		tr.classList.toggle("selected", tr.dataset.marker === selectedMarker);
	});
}

// drag holds the state of one pointer drag of a marker.
let drag = null;

function startDrag(kind, id, ev, svg) {
	drag = { kind, id, svg, figID: (svg.closest("figure") || {}).id, gesture: `g${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`, pending: null, raf: 0 };
	svg.setPointerCapture(ev.pointerId);
	$("#chart")?.classList.toggle("dragging", kind === "chart");
	ev.preventDefault();
}

// queueMove sends a drag's move at once when the last one left at least
// half a frame ago (the browser already delivers pointer moves at most once
// a frame), else on the next frame, so that a drag never waits a frame
// before it leaves and never sends more than about one move a frame.
function queueMove(ch) {
	const now = performance.now();
	if (!drag.raf && now - (drag.sentAt || -1e9) >= 8) {
		drag.pending = null;
		drag.sentAt = now;
		sendMove(ch);
		return;
	}
	drag.pending = ch;
	if (drag.raf) return;
	drag.raf = requestAnimationFrame(() => {
		if (!drag) return;
		drag.raf = 0;
		if (drag.pending) {
			drag.sentAt = performance.now();
			sendMove(drag.pending);
		}
		drag.pending = null;
	});
}

function sendMove(ch) {
	if (ch.partdrag) {
		const { partdrag, ...rest } = ch;
		send({ type: "partdrag", change: rest });
	} else {
		change(ch);
	}
}

function endDrag() {
	if (!drag) return;
	if (drag.pending) sendMove(drag.pending);
	$("#chart")?.classList.remove("dragging");
	drag = null;
}

document.addEventListener("pointerdown", (ev) => {
	if (ev.button !== 0) return;
	const svg = ev.target.closest("#chart svg");
	if (svg) {
		const mk = markerIDOf(ev.target, "mk-");
		if (mk && mk.startsWith("ph-")) {
			if (canEdit) startDrag("part", mk.slice(3), ev, svg);
			else viewOnly("moving a part");
			return;
		}
		if (mk) {
			select(mk);
			if (canEdit) startDrag("chart", mk, ev, svg);
			return;
		}
		const tr = ev.target.closest('[id^="trace-"]');
		if (tr && !tr.id.endsWith("-raw") && !/^trace-(net|mc)/.test(tr.id)) {
			const [sweepId, port] = parseTraceID(tr.id.slice("trace-".length));
			if (sweepId && canEdit) change({ op: "marker.add", sweepId, port, gamma: toGamma(svg, ev.clientX, ev.clientY) });
			else if (sweepId) viewOnly("placing a marker");
			return;
		}
		if (view.zoom > 1) startPan(ev, svg);
		return;
	}
	const psvg = ev.target.closest(".plot svg");
	if (psvg) {
		const mk = markerIDOf(ev.target, psvg.dataset.idPrefix ? psvg.dataset.idPrefix + "pmk-" : "pmk-") || markerIDFromPlot(ev.target);
		if (mk && canEdit) { select(mk); startDrag("plot", mk, ev, psvg); return; }
		if (!psvg.closest("#plot-tdr")) startSpanDrag(ev, psvg);
	}
});

function markerIDFromPlot(el) {
	const g = el.closest('[id*="pmk-"]');
	if (!g) return null;
	return g.id.slice(g.id.indexOf("pmk-") + 4);
}

// Trace ids are "<sweepID>-p<port>" (see server/render.go).
function parseTraceID(s) {
	const m = /^(.*)-p(\d+)$/.exec(s);
	return m ? [m[1], Number(m[2])] : [null, 0];
}

document.addEventListener("pointermove", (ev) => {
	if (pan) { movePan(ev); return; }
	if (spanDrag) moveSpanDrag(ev);
});

// A drag follows pointerrawupdate where the browser has it (Chromium, on a
// secure origin such as localhost): it is delivered as soon as the pointer
// moves, where pointermove waits for the next frame, so each move leaves up
// to a frame sooner. Elsewhere pointermove. (A pan and a span drag send
// the page's view, drawn whole: they keep to pointermove.)
const moveEvent = "onpointerrawupdate" in window ? "pointerrawupdate" : "pointermove";
document.addEventListener(moveEvent, (ev) => {
	if (!drag) return;
	// The chart and plots are drawn again as the drag goes on: map the
	// pointer with the drawing on the page now, not the one the drag began on.
	if (drag.kind === "chart") {
		queueMove({ op: "marker.move", markerId: drag.id, gamma: toGamma(chartSVG() || drag.svg, ev.clientX, ev.clientY), gesture: drag.gesture });
	} else if (drag.kind === "part") {
		queueMove({ partdrag: true, partId: drag.id, gamma: toGamma(chartSVG() || drag.svg, ev.clientX, ev.clientY), gesture: drag.gesture });
	} else {
		const fig = drag.svg.isConnected ? null : document.getElementById(drag.figID);
		const f = plotFreq((fig && fig.querySelector("svg")) || drag.svg, ev.clientX, ev.clientY);
		if (f > 0) queueMove({ op: "marker.move", markerId: drag.id, freqHz: f, gesture: drag.gesture });
	}
});
document.addEventListener("pointerup", (ev) => { endPan(); endSpanDrag(ev); endDrag(); });
document.addEventListener("pointercancel", () => { endPan(); endSpanDrag(null); endDrag(); });

// plotFreq turns a pointer x on a plot into a frequency, from the plot's
// data-x0/x1 (user units) and data-f0/f1 (Hz) attributes.
function plotFreq(svg, clientX, clientY) {
	const pt = svg.createSVGPoint();
	pt.x = clientX; pt.y = clientY;
	const p = pt.matrixTransform(svg.getScreenCTM().inverse());
	const x0 = Number(svg.dataset.x0), x1 = Number(svg.dataset.x1);
	const f0 = Number(svg.dataset.f0), f1 = Number(svg.dataset.f1);
	if (!(x1 > x0) || !(f1 > f0)) return 0;
	const t = Math.min(1, Math.max(0, (p.x - x0) / (x1 - x0)));
	return f0 + t * (f1 - f0);
}

document.addEventListener("keydown", (ev) => {
	if (!canEdit) return;
	const tag = (ev.target.tagName || "").toLowerCase();
	if (tag === "input" || tag === "select" || tag === "textarea") return;
	if ((ev.ctrlKey || ev.metaKey) && ev.key.toLowerCase() === "z") {
		change({ op: ev.shiftKey ? "redo" : "undo" });
		ev.preventDefault();
		return;
	}
	if (!selectedMarker) return;
	if (ev.key === "ArrowRight" || ev.key === "ArrowLeft") {
		const n = (ev.key === "ArrowRight" ? 1 : -1) * (ev.shiftKey ? 10 : 1);
		change({ op: "marker.step", markerId: selectedMarker, steps: n });
		ev.preventDefault();
	}
});

// ---- buttons, inputs and forms ----

document.addEventListener("click", (ev) => {
	const row = ev.target.closest("#readout-body tr[data-marker]");
	if (row) select(row.dataset.marker);
	const res = ev.target.closest("tr[data-mark-sweep]");
	if (res) {
		const d = res.dataset;
		if (!canEdit) viewOnly("placing a marker");
		else change({ op: "marker.add", sweepId: d.markSweep, port: Number(d.markPort), freqHz: Number(d.markF) });
		return;
	}
	const va = ev.target.closest("button[data-view-action]");
	if (va) { viewAction(va); return; }
	const b = ev.target.closest("button[data-action]");
	if (!b || !canEdit) return;
	const d = b.dataset;
	switch (d.action) {
	case "undo": change({ op: "undo" }); break;
	case "redo": change({ op: "redo" }); break;
	case "step": change({ op: "marker.step", markerId: d.marker, steps: Number(d.steps) }); break;
	case "dip": change({ op: "marker.to_dip", markerId: d.marker }); break;
	case "remove-marker": change({ op: "marker.remove", markerId: d.marker }); break;
	case "remove-sweep": change({ op: "sweep.remove", sweepId: d.sweep }); break;
	case "remove-band": change({ op: "band.remove", bandId: d.band }); break;
	case "part-add": send({ type: "form", form: "part.add", fields: { kind: d.kind } }); break;
	case "part-move": change({ op: "part.move", partId: d.part, index: Number(d.index) }); break;
	case "part-remove": change({ op: "part.remove", partId: d.part }); break;
	case "search-use": send({ type: "form", form: "search.use", fields: { index: d.index } }); break;
	case "synth-use": send({ type: "form", form: "synth.use", fields: { index: d.index } }); break;
	case "stub-use": send({ type: "form", form: "stub.use", fields: { index: d.index, ...lineSettings() } }); break;
	case "qw-use": send({ type: "form", form: "qw.use", fields: { index: d.index, ...lineSettings() } }); break;
	case "search-cancel": send({ type: "action", action: "search-cancel" }); break;
	case "tune-use": send({ type: "form", form: "tune.use", fields: { tuneId: d.tune, index: d.index } }); break;
	default: send({ type: "action", action: d.action, fields: { ...d } });
	}
});

document.addEventListener("change", (ev) => {
	const el = ev.target;
	if (!el.dataset) return;
	if (viewChange(el)) return;
	if (!canEdit) return;
	const d = el.dataset;
	if (d.partValue) {
		clearTimeout(typeTimer);
		if (lastTyped[d.partValue] === el.value.trim() && !el.classList.contains("invalid")) {
			// Sent as it was typed: show it as the server wrote it back.
			el.value = el.getAttribute("value");
			return;
		}
		partSet(d.partValue, { value: el.value, gesture: typeGesture(d.partValue) });
		return;
	}
	if (d.partFine) {
		sliding = false;
		fineSlide = null;
		flushPending();
		return;
	}
	if (d.partSeries !== undefined && d.partSeries) { partSet(d.partSeries, { series: el.value }); return; }
	if (d.partModel) { partSet(d.partModel, { model: el.value }); return; }
	if (d.partSlider) {
		sliding = false;
		partSet(d.partSlider, { log: el.value, gesture: slide && slide.el === el ? slide.gesture : "" });
		slide = null;
		flushPending();
		return;
	}
	if (d.change === "network.select") { change({ op: "network.select", networkId: el.value }); return; }
	if (!d.change) return;
	const op = el.dataset.change;
	const ch = { op, sweepId: el.dataset.sweep };
	if (op === "sweep.visible") ch.visible = el.checked;
	else if (op === "sweep.color") ch.color = el.value;
	else if (op === "sweep.rename") ch.name = el.value;
	change(ch);
});

document.addEventListener("submit", (ev) => {
	const vf = ev.target.closest("form[data-view-form]");
	if (vf) { ev.preventDefault(); viewForm(vf); return; }
	const form = ev.target.closest("form[data-form]");
	if (!form) {
		leaving = true;
		return;
	}
	ev.preventDefault();
	if (!canEdit) return;
	const fields = {};
	for (const el of form.elements) {
		if (!el.name) continue;
		fields[el.name] = el.type === "checkbox" ? String(el.checked) : el.value;
	}
	send({ type: "form", form: form.dataset.form, fields });
});

// lineSettings are the line figures typed for the stub and quarter-wave
// solutions.
function lineSettings() {
	const f = $("#line-settings");
	const out = {};
	if (!f) return out;
	for (const n of ["vf", "loss", "lossRef"]) {
		const e = f.elements.namedItem(n);
		if (e) out[n] = e.value;
	}
	return out;
}

// Fields marked data-keep keep what was typed in them when their panel is
// drawn again.
const kept = {};
document.addEventListener("input", (ev) => {
	const k = ev.target.dataset && ev.target.dataset.keep;
	if (k) kept[k] = ev.target.value;
});

function restoreKept() {
	document.querySelectorAll("[data-keep]").forEach((e) => {
		if (kept[e.dataset.keep] !== undefined && document.activeElement !== e) e.value = kept[e.dataset.keep];
	});
}

function partSet(partId, fields) {
	send({ type: "form", form: "part.set", fields: { partId, ...fields } });
}

// A part's slider drags its value: one gesture per slide, at most one
// message per frame.
let slide = null;
document.addEventListener("input", (ev) => {
	const el = ev.target;
	if (!canEdit || !el.dataset) return;
	if (el.dataset.partValue) { typed(el); return; }
	if (el.dataset.partFine) { fine(el); return; }
	if (!el.dataset.partSlider) return;
	sliding = true;
	if (!slide || slide.el !== el) slide = { el, gesture: `s${Date.now().toString(36)}`, raf: 0 };
	if (slide.raf) return;
	slide.raf = requestAnimationFrame(() => {
		slide.raf = 0;
		partSet(el.dataset.partSlider, { log: el.value, gesture: slide.gesture });
	});
});
document.addEventListener("focusout", () => { if (!sliding) setTimeout(flushPending, 0); });

// ---- amplifier panel: dragging a termination (server/amp.go, web/amp.templ) ----
// The Γs handle of the source-plane chart and the ΓL handle of the
// load-plane chart drag like a marker: at most one amp.point change per
// animation frame, one gesture (one undo step) per drag. The server
// answers with the two handles and the readout.
document.addEventListener("pointerdown", (ev) => {
	const fig = ev.target.closest(".amp-chart[data-plane]");
	if (!fig || !canEdit || !ev.target.closest("g.handle")) return;
	startDrag("amp", fig.dataset.plane, ev, fig.querySelector("svg"));
});
document.addEventListener("pointermove", (ev) => {
	if (!drag || drag.kind !== "amp") return;
	queueMove({ op: "amp.point", plane: drag.id, gamma: toGamma(drag.svg, ev.clientX, ev.clientY), gesture: drag.gesture });
});

// ---- uploads ----

// The files are copied out of the picker's live list first: the picker is
// cleared at once so that the same file can be chosen again, and a live
// list would empty under the loop after the first upload. Each answer is
// kept (uploadLog) and shown again whenever the sweeps panel is redrawn,
// until the user dismisses it.
const uploadLog = [];
let uploadSeq = 0;

async function upload(fileList) {
	const files = [...fileList];
	for (const f of files) {
		const fd = new FormData();
		fd.append("file", f, f.name);
		try {
			const res = await fetch(`/s/${token}/upload`, { method: "POST", body: fd, headers: { Accept: "application/json" } });
			const out = await res.json().catch(() => ({ error: `the server answered ${res.status}` }));
			logUpload(res.ok ? `${f.name}: added` : `${f.name}: ${out.error}`, res.ok);
		} catch (e) {
			logUpload(`${f.name}: ${e}`, false);
		}
	}
}

function logUpload(text, ok) {
	uploadLog.push({ id: ++uploadSeq, text, ok });
	showUploadLog();
}

function showUploadLog() {
	const list = $("#upload-errors");
	if (!list) return;
	list.replaceChildren(...uploadLog.map((e) => {
		const li = document.createElement("li");
		li.textContent = e.text + " ";
		if (e.ok) li.className = "ok";
		li.dataset.testid = e.ok ? "upload-ok" : "upload-error";
		const x = document.createElement("button");
		x.type = "button";
		x.className = "dismiss";
		x.textContent = "✕";
		x.title = "dismiss";
		x.dataset.dismissUpload = String(e.id);
		li.append(x);
		return li;
	}));
	if (uploadLog.length > 1) {
		const li = document.createElement("li");
		const x = document.createElement("button");
		x.type = "button";
		x.className = "dismiss";
		x.textContent = "dismiss all";
		x.dataset.dismissUpload = "all";
		li.append(x);
		list.append(li);
	}
}

// The sweeps' "plane…" links open that sweep's reference-plane settings.
document.addEventListener("click", (ev) => {
	const a = ev.target.closest && ev.target.closest("a[data-open-plane]");
	if (!a) return;
	const d = document.getElementById(`plane-${a.dataset.openPlane}`);
	if (d) { d.open = true; d.scrollIntoView({ block: "center" }); ev.preventDefault(); }
});

document.addEventListener("click", (ev) => {
	const x = ev.target.closest("button[data-dismiss-upload]");
	if (!x) return;
	const id = x.dataset.dismissUpload;
	if (id === "all") uploadLog.length = 0;
	else {
		const i = uploadLog.findIndex((e) => String(e.id) === id);
		if (i >= 0) uploadLog.splice(i, 1);
	}
	showUploadLog();
});

document.addEventListener("dragover", (ev) => {
	const d = ev.target.closest && ev.target.closest("#drop");
	if (!d) return;
	ev.preventDefault();
	d.classList.add("over");
});
document.addEventListener("dragleave", (ev) => {
	const d = ev.target.closest && ev.target.closest("#drop");
	if (d) d.classList.remove("over");
});
document.addEventListener("drop", (ev) => {
	const d = ev.target.closest && ev.target.closest("#drop");
	if (!d) return;
	ev.preventDefault();
	d.classList.remove("over");
	if (ev.dataTransfer && ev.dataTransfer.files.length) upload(ev.dataTransfer.files);
});
document.addEventListener("change", (ev) => {
	if (ev.target.id === "file-input" && ev.target.files.length) {
		upload(ev.target.files);
		ev.target.value = "";
	}
});

// ---- the page's own view: chart reference, zoom and pan, plots, span ----
//
// The view belongs to this page (kept for the tab in sessionStorage), not to
// the session: a viewer may zoom too. Each change sends the whole view; the
// server answers with the chart, the plots and the resonance table drawn
// for it. At most one view message is in flight; the latest wins.

const viewStore = `matchbench-view-${token}`;
let view = loadView();
let viewSeq = 0;
let viewMsgID = 0;
let viewInFlight = false;
let viewDirty = false;

function blankView() {
	return { vid: "", z0: "", chart: "", zoom: 1, cre: 0, cim: 0, spanLo: "", spanHi: "", span: "", plots: {}, yr: {}, rl: "", aperture: "" };
}

function loadView() {
	try {
		const v = JSON.parse(sessionStorage.getItem(viewStore) || "null");
		if (v && typeof v === "object") return Object.assign(blankView(), v);
	} catch { /* no storage: the default view */ }
	return blankView();
}

function saveView() {
	try { sessionStorage.setItem(viewStore, JSON.stringify(view)); } catch { /* private mode */ }
}

function isDefaultView() {
	const b = blankView();
	return ["z0", "chart", "spanLo", "spanHi", "span", "rl", "aperture"].every((k) => view[k] === b[k]) &&
		view.zoom === 1 && Object.keys(view.plots).length === 0 && Object.keys(view.yr).length === 0;
}

function viewFields() {
	const f = { vid: view.vid, z0: view.z0, chart: view.chart, zoom: String(view.zoom), cre: String(view.cre), cim: String(view.cim),
		spanLo: view.spanLo, spanHi: view.spanHi, span: view.span, rl: view.rl, aperture: view.aperture };
	for (const [slot, q] of Object.entries(view.plots)) f[`plot.${slot}`] = q;
	for (const [slot, r] of Object.entries(view.yr)) {
		if (!view.plots[slot]) f[`plot.${slot}`] = currentPlotParam(slot);
		f[`ymin.${slot}`] = r[0];
		f[`ymax.${slot}`] = r[1];
	}
	return f;
}

function currentPlotParam(slot) {
	const sel = document.querySelector(`select[data-view-plot="${CSS.escape(slot)}"]`);
	return sel ? sel.value : "";
}

function sendView() {
	saveView();
	if (viewInFlight) { viewDirty = true; return; }
	view.vid = `v${++viewSeq}`;
	const id = nextID;
	if (send({ type: "view", fields: viewFields() })) {
		viewMsgID = id;
		viewInFlight = true;
		viewDirty = false;
	}
	updateExportLinks();
}

// viewChange handles a changed view control; it returns false for others.
function viewChange(el) {
	const d = el.dataset;
	if (d.viewPlot) {
		view.plots[d.viewPlot] = el.value;
		delete view.yr[d.viewPlot];
		sendView();
		return true;
	}
	switch (d.view) {
	case "z0": view.z0 = el.value.trim(); break;
	case "chart": view.chart = el.value; break;
	case "aperture": view.aperture = el.value.trim(); break;
	default: return false;
	}
	sendView();
	return true;
}

function viewForm(form) {
	const val = (n) => { const e = form.elements.namedItem(n); return e ? e.value.trim() : ""; };
	switch (form.dataset.viewForm) {
	case "span":
		view.spanLo = val("spanLo"); view.spanHi = val("spanHi"); view.span = "";
		break;
	case "plot": {
		const slot = form.dataset.slot;
		view.plots[slot] = currentPlotParam(slot);
		view.yr[slot] = [val("ymin"), val("ymax")];
		break;
	}
	case "rl":
		view.rl = val("rl");
		break;
	}
	sendView();
}

function viewAction(b) {
	switch (b.dataset.viewAction) {
	case "chart-reset": view.zoom = 1; view.cre = 0; view.cim = 0; break;
	case "span-bands": view.span = "bands"; view.spanLo = ""; view.spanHi = ""; break;
	case "span-reset": view.span = ""; view.spanLo = ""; view.spanHi = ""; break;
	case "plot-auto": delete view.yr[b.dataset.slot]; break;
	default: return;
	}
	sendView();
}

// The export links carry the view, so that an exported chart or plot is
// the one on the screen.
function updateExportLinks() {
	const q = new URLSearchParams();
	if (!isDefaultView()) for (const [k, v] of Object.entries(viewFields())) if (v !== "" && k !== "vid") q.set(k, v);
	document.querySelectorAll("a[data-export]").forEach((a) => {
		const u = new URL(a.getAttribute("href"), location.href);
		u.search = q.toString();
		a.setAttribute("href", u.pathname + u.search);
	});
}

// ---- chart zoom and pan ----

// chartGeometry reads how the chart is drawn: user units per unit of Γ,
// the Γ at its middle, the magnification, and the screen pixels per user
// unit.
function chartGeometry(svg) {
	const k = Number(svg.dataset.gammaScale);
	const [cre, cim] = (svg.dataset.gammaCentre || "0 0").split(" ").map(Number);
	const zoom = 1 / (Number(svg.dataset.gammaRadius) || 1);
	const vb = svg.viewBox.baseVal;
	return { k, cre, cim, zoom, half: -vb.x, pxPerUnit: svg.getBoundingClientRect().width / vb.width };
}

// setPreview moves and scales the drawn chart at once to the view asked
// for, until the server's drawing of it lands (clearPreview): a point
// drawn at user position u goes to s·u + t, s = k'/k.
function setPreview() {
	const svg = chartSVG();
	if (!svg) return;
	const g = chartGeometry(svg);
	const s = view.zoom / g.zoom, kD = g.k * s;
	const tx = (1 - s) * g.half + kD * (g.cre - view.cre);
	const ty = (1 - s) * g.half - kD * (g.cim - view.cim);
	svg.style.transformOrigin = "0 0";
	svg.style.transform = `translate(${tx * g.pxPerUnit / s}px, ${ty * g.pxPerUnit / s}px)`.replace(/^/, `scale(${s}) `);
}

function clearPreview() {
	const svg = chartSVG();
	if (!svg || !svg.style.transform) return;
	const g = chartGeometry(svg);
	if (Math.abs(g.zoom - view.zoom) < 1e-9 * view.zoom && Math.abs(g.cre - view.cre) < 1e-9 && Math.abs(g.cim - view.cim) < 1e-9) {
		svg.style.transform = "";
	} else {
		setPreview();
	}
}

function clampCentre() {
	const r = Math.hypot(view.cre, view.cim);
	if (r > 1) { view.cre /= r; view.cim /= r; }
	if (view.zoom <= 1) { view.zoom = 1; view.cre = 0; view.cim = 0; }
}

document.addEventListener("wheel", (ev) => {
	const svg = ev.target.closest && ev.target.closest("#chart svg");
	if (!svg) return;
	ev.preventDefault();
	const p = toGamma(svg, ev.clientX, ev.clientY);
	const factor = Math.exp(-Math.max(-300, Math.min(300, ev.deltaY)) * 0.0015);
	const z0 = view.zoom;
	const z1 = Math.min(200, Math.max(1, z0 * factor));
	// Keep the Γ under the pointer where it is: c' = p − (p − c)·z/z'.
	view.cre = p.re - (p.re - view.cre) * z0 / z1;
	view.cim = p.im - (p.im - view.cim) * z0 / z1;
	view.zoom = z1;
	clampCentre();
	setPreview();
	sendView();
}, { passive: false });

let pan = null;

function startPan(ev, svg) {
	pan = { x: ev.clientX, y: ev.clientY, cre: view.cre, cim: view.cim, svg, moved: false };
	svg.setPointerCapture(ev.pointerId);
	$("#chart")?.classList.add("panning");
	ev.preventDefault();
}

function movePan(ev) {
	const g = chartGeometry(pan.svg);
	const kD = g.k * view.zoom / g.zoom;
	const dx = (ev.clientX - pan.x) / g.pxPerUnit, dy = (ev.clientY - pan.y) / g.pxPerUnit;
	if (Math.hypot(dx, dy) < 1) return;
	pan.moved = true;
	view.cre = pan.cre - dx / kD;
	view.cim = pan.cim + dy / kD;
	clampCentre();
	setPreview();
	sendView();
}

function endPan() {
	if (!pan) return;
	$("#chart")?.classList.remove("panning");
	pan = null;
}

// ---- drag across a plot to zoom the span ----

let spanDrag = null;

function startSpanDrag(ev, svg) {
	const fig = svg.closest("figure");
	const r = svg.getBoundingClientRect();
	const band = document.createElement("div");
	band.className = "rubber";
	band.style.top = `${svg.offsetTop}px`;
	band.style.height = `${r.height}px`;
	band.style.left = `${ev.clientX - fig.getBoundingClientRect().left}px`;
	band.style.width = "0px";
	fig.append(band);
	spanDrag = { svg, fig, band, x0: ev.clientX, y: ev.clientY };
	svg.setPointerCapture(ev.pointerId);
	ev.preventDefault();
}

function moveSpanDrag(ev) {
	const left = spanDrag.fig.getBoundingClientRect().left;
	const a = Math.min(spanDrag.x0, ev.clientX), b = Math.max(spanDrag.x0, ev.clientX);
	spanDrag.band.style.left = `${a - left}px`;
	spanDrag.band.style.width = `${b - a}px`;
}

function endSpanDrag(ev) {
	if (!spanDrag) return;
	const d = spanDrag;
	spanDrag = null;
	d.band.remove();
	if (!ev || Math.abs(ev.clientX - d.x0) < 6) return;
	const f0 = plotFreq(d.svg, Math.min(d.x0, ev.clientX), d.y), f1 = plotFreq(d.svg, Math.max(d.x0, ev.clientX), d.y);
	if (!(f1 > f0)) return;
	view.spanLo = String(f0); view.spanHi = String(f1); view.span = "";
	sendView();
}

// ---- typing a part's value: the figures answer as it is typed ----
//
// A value is sent half a second after the last key once it ends in a
// prefix or unit (3.9n, 1.2 pF, 0.25λ): a bare number is most likely
// unfinished. The typing of one field is one undo step. A value the server
// refuses is marked on the field, not announced.

const typing = new Map(); // message id → field
const lastTyped = {}; // part → the text last sent while typing
let typeTimer = 0;
let typeGestures = {};

function typeGesture(partId) {
	if (!typeGestures[partId]) typeGestures[partId] = `t${Date.now().toString(36)}${partId}`;
	return typeGestures[partId];
}

document.addEventListener("focusin", (ev) => {
	if (ev.target.dataset && ev.target.dataset.partValue) typeGestures = {};
});

// Leaving a field whose typing was applied shows the value as the server
// wrote it back ("160n" becomes "160 nH"). A field refocused after its
// panel was redrawn fires no change event, so this is done on focusout.
document.addEventListener("focusout", (ev) => {
	const el = ev.target;
	const id = el.dataset && el.dataset.partValue;
	if (!id || lastTyped[id] !== el.value.trim() || el.classList.contains("invalid")) return;
	clearTimeout(typeTimer);
	el.value = el.getAttribute("value");
});

function typed(el) {
	clearTimeout(typeTimer);
	const text = el.value.trim();
	if (!/[a-zA-Zµμλ\u03a9]\s*$/.test(text)) return;
	typeTimer = setTimeout(() => {
		const id = nextID;
		if (send({ type: "form", form: "part.set", fields: { partId: el.dataset.partValue, value: text, gesture: typeGesture(el.dataset.partValue) } })) {
			typing.set(id, el.dataset.partValue);
			lastTyped[el.dataset.partValue] = text;
		}
	}, 500);
}

function typingField(id) {
	return document.querySelector(`[data-part-value="${CSS.escape(typing.get(id) || "")}"]`);
}

function typingError(id, msg) {
	const el = typingField(id);
	typing.delete(id);
	if (el) { el.classList.add("invalid"); el.title = msg; }
}

function typingOK(id) {
	const el = typingField(id);
	typing.delete(id);
	if (el) { el.classList.remove("invalid"); el.title = ""; }
}

// ---- the fine slider: ±10 % about the value it started from ----

let fineSlide = null;

function fine(el) {
	const id = el.dataset.partFine;
	sliding = true;
	if (!fineSlide || fineSlide.el !== el) {
		fineSlide = { el, base: Number(el.dataset.partBase), gesture: `f${Date.now().toString(36)}`, raf: 0 };
	}
	if (fineSlide.raf) return;
	fineSlide.raf = requestAnimationFrame(() => {
		fineSlide.raf = 0;
		const x = Number(el.value);
		partSet(id, { log: String(fineSlide.base + Math.log10(1 + 0.1 * x)), gesture: fineSlide.gesture });
	});
}

updateExportLinks();

connect();
