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

// ---- websocket ----

function connect() {
	if (!token) return;
	const proto = location.protocol === "https:" ? "wss:" : "ws:";
	ws = new WebSocket(`${proto}//${location.host}/s/${token}/ws`);
	ws.addEventListener("open", () => {
		retryMs = 500;
		setStatus(canEdit ? "live · editing" : "live · watching", "on");
		send({ type: "hello", v: version });
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
		break;
	case "error":
		notice(msg.msg || "the server refused the change");
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
				animating = false;
				nextUpdate();
			});
			return;
		}
		(msg.frags || []).forEach(applyFrag);
		restoreSelection();
	}
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
	if (!frag.svg && editingInside(old)) {
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

function toGamma(svg, clientX, clientY) {
	const pt = svg.createSVGPoint();
	pt.x = clientX; pt.y = clientY;
	const p = pt.matrixTransform(svg.getScreenCTM().inverse());
	const k = Number(svg.dataset.gammaScale || svg.getAttribute("data-gamma-scale"));
	return { re: p.x / k, im: -p.y / k };
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
	drag = { kind, id, svg, gesture: `g${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`, pending: null, raf: 0 };
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
	const svg = ev.target.closest("#chart svg");
	if (svg) {
		const mk = markerIDOf(ev.target, "mk-");
		if (mk && mk.startsWith("ph-")) {
			if (canEdit) startDrag("part", mk.slice(3), ev, svg);
			return;
		}
		if (mk) {
			select(mk);
			if (canEdit) startDrag("chart", mk, ev, svg);
			return;
		}
		const tr = ev.target.closest('[id^="trace-"]');
		if (tr && canEdit) {
			const [sweepId, port] = parseTraceID(tr.id.slice("trace-".length));
			if (sweepId) change({ op: "marker.add", sweepId, port, gamma: toGamma(svg, ev.clientX, ev.clientY) });
		}
		return;
	}
	const psvg = ev.target.closest(".plot svg");
	if (psvg && canEdit) {
		const mk = markerIDOf(ev.target, psvg.dataset.idPrefix ? psvg.dataset.idPrefix + "pmk-" : "pmk-") || markerIDFromPlot(ev.target);
		if (mk) { select(mk); startDrag("plot", mk, ev, psvg); }
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

// A drag follows pointerrawupdate where the browser has it (Chromium, on a
// secure origin such as localhost): it is delivered as soon as the pointer
// moves, where pointermove waits for the next frame, so each move leaves up
// to a frame sooner. Elsewhere pointermove.
const moveEvent = "onpointerrawupdate" in window ? "pointerrawupdate" : "pointermove";
document.addEventListener(moveEvent, (ev) => {
	if (!drag) return;
	if (drag.kind === "chart") {
		queueMove({ op: "marker.move", markerId: drag.id, gamma: toGamma(drag.svg, ev.clientX, ev.clientY), gesture: drag.gesture });
	} else if (drag.kind === "part") {
		queueMove({ partdrag: true, partId: drag.id, gamma: toGamma(drag.svg, ev.clientX, ev.clientY), gesture: drag.gesture });
	} else {
		const f = plotFreq(drag.svg, ev.clientX, ev.clientY);
		if (f > 0) queueMove({ op: "marker.move", markerId: drag.id, freqHz: f, gesture: drag.gesture });
	}
});
document.addEventListener("pointerup", endDrag);
document.addEventListener("pointercancel", endDrag);

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
	case "stub-use": send({ type: "form", form: "stub.use", fields: { index: d.index } }); break;
	case "search-cancel": send({ type: "action", action: "search-cancel" }); break;
	case "tune-use": send({ type: "form", form: "tune.use", fields: { tuneId: d.tune, index: d.index } }); break;
	default: send({ type: "action", action: d.action, fields: { ...d } });
	}
});

document.addEventListener("change", (ev) => {
	const el = ev.target;
	if (!canEdit || !el.dataset) return;
	const d = el.dataset;
	if (d.partValue) { partSet(d.partValue, { value: el.value }); return; }
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

function partSet(partId, fields) {
	send({ type: "form", form: "part.set", fields: { partId, ...fields } });
}

// A part's slider drags its value: one gesture per slide, at most one
// message per frame.
let slide = null;
document.addEventListener("input", (ev) => {
	const el = ev.target;
	if (!canEdit || !el.dataset || !el.dataset.partSlider) return;
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

async function upload(files) {
	const list = $("#upload-errors");
	if (list) list.replaceChildren();
	for (const f of files) {
		const fd = new FormData();
		fd.append("file", f, f.name);
		let text;
		try {
			const res = await fetch(`/s/${token}/upload`, { method: "POST", body: fd, headers: { Accept: "application/json" } });
			const out = await res.json().catch(() => ({ error: `the server answered ${res.status}` }));
			text = res.ok ? `${f.name}: added` : `${f.name}: ${out.error}`;
			addLine(list, text, res.ok);
		} catch (e) {
			addLine(list, `${f.name}: ${e}`, false);
		}
	}
}

function addLine(list, text, ok) {
	if (!list) return;
	const li = document.createElement("li");
	li.textContent = text;
	if (ok) li.className = "ok";
	li.dataset.testid = ok ? "upload-ok" : "upload-error";
	list.append(li);
}

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

connect();
