// The play page's script: reads the show's data, evaluates every prop's
// motion in closed form, reads each frame's LED colours and draws the stage.
// The motion formula and the data layout are those of src/play/data.rs.
"use strict";

(function () {
  const $ = (id) => document.getElementById(id);

  // Any script error is written where a test (or a reader) sees it.
  function report(text) {
    document.title = "page error: " + text;
    document.body.setAttribute("data-error", text);
  }
  window.onerror = function (msg, src, line, col) {
    report(msg + " (line " + line + ":" + col + ")");
    return false;
  };
  window.addEventListener("unhandledrejection", function (e) {
    report("unhandled rejection: " + (e.reason && e.reason.message ? e.reason.message : e.reason));
  });

  const TAU = 2 * Math.PI;
  const params = new URLSearchParams(location.search);
  const bare = params.has("bare");
  if (bare) document.body.classList.add("bare");

  // ---- The show -----------------------------------------------------------

  function decodeBase64(text) {
    const bin = atob(text);
    const out = new Uint8Array(bin.length);
    for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
    return out;
  }

  // Runs: a LEB128 number 2 * count + uniform, then 3 bytes (uniform: one
  // colour for every LED) or leds * 3 bytes (see data.rs). Uniform runs are
  // spread out to leds * 3 bytes here, so that frames are read one way.
  function decodeRuns(raw, leds) {
    const starts = [];
    const offsets = [];
    let frame = 0;
    let i = 0;
    // An unsigned LEB128 number at raw[i], moving i past it.
    const varint = () => {
      let n = 0;
      let mul = 1;
      for (;;) {
        const b = raw[i++];
        n += (b & 0x7f) * mul;
        mul *= 128;
        if ((b & 0x80) === 0) return n;
      }
    };
    // First pass: the size of the spread-out bytes.
    let size = 0;
    while (i < raw.length) {
      const n = varint();
      const uniform = n % 2 === 1;
      i += uniform ? 3 : leds * 3;
      size += leds * 3;
    }
    const bytes = new Uint8Array(size);
    let o = 0;
    i = 0;
    while (i < raw.length) {
      const n = varint();
      const uniform = n % 2 === 1;
      const count = (n - (uniform ? 1 : 0)) / 2;
      starts.push(frame);
      offsets.push(o);
      frame += count;
      if (uniform) {
        for (let l = 0; l < leds; l++) {
          bytes[o + 3 * l] = raw[i];
          bytes[o + 3 * l + 1] = raw[i + 1];
          bytes[o + 3 * l + 2] = raw[i + 2];
        }
        i += 3;
      } else {
        bytes.set(raw.subarray(i, i + leds * 3), o);
        i += leds * 3;
      }
      o += leds * 3;
    }
    return { starts: Float64Array.from(starts), offsets: Uint32Array.from(offsets), bytes: bytes, frames: frame };
  }

  function prepareShow(d) {
    const show = d;
    for (const p of show.props) {
      p.nLeds = p.leds.length;
      p.runs = decodeRuns(decodeBase64(p.colours), p.nLeds);
      p.colours = null;
      p.lastRun = 0;
    }
    show.frameRate = show.frame_rate;
    return show;
  }

  let S = prepareShow(JSON.parse($("show-data").textContent));

  // Global beat (0 = bar 1 beat 1) at t seconds; the first tempo extends backwards.
  function beatAt(t) {
    const rows = S.tempo;
    let r = rows[0];
    for (let i = 1; i < rows.length && rows[i][1] <= t; i++) r = rows[i];
    return r[0] + ((t - r[1]) * r[2]) / 60;
  }

  function timeAtBeat(beat) {
    const rows = S.tempo;
    let r = rows[0];
    for (let i = 1; i < rows.length && rows[i][0] <= beat; i++) r = rows[i];
    return r[1] + ((beat - r[0]) * 60) / r[2];
  }

  function timeAtBar(bar) {
    return timeAtBeat((bar - 1) * S.beats_per_bar);
  }

  function spanAt(p, beat) {
    const spans = p.spans;
    let lo = 0;
    let hi = spans.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (spans[mid].beats[0] <= beat) lo = mid + 1;
      else hi = mid;
    }
    const i = lo - 1;
    return i >= 0 && beat < spans[i].beats[1] ? spans[i] : null;
  }

  // Every LED of prop p at beat `beat`, stage metres, into out[3 * led ..].
  // Also the hand into hand[0..3].
  function placeLeds(p, beat, out, hand) {
    const sp = spanAt(p, beat);
    const n = p.nLeds;
    if (!sp) {
      const a = p.anchor;
      for (let k = 0; k < n; k++) {
        out[3 * k] = a[0];
        out[3 * k + 1] = a[1] - p.leds[k];
        out[3 * k + 2] = a[2];
      }
      hand[0] = a[0];
      hand[1] = a[1];
      hand[2] = a[2];
      return;
    }
    const u = sp.phase0 + sp.per_beat * (beat - sp.beats[0]);
    let h0 = 0;
    let h1 = 0;
    for (const r of sp.hand) {
      const ang = r[2] + TAU * r[1] * u;
      h0 += r[0] * Math.cos(ang);
      h1 += r[0] * Math.sin(ang);
    }
    const ta = sp.tether[1] + TAU * sp.tether[0] * u;
    const c = Math.cos(ta);
    const s = Math.sin(ta);
    const A = sp.anchor;
    const U = sp.up;
    const R = sp.right;
    for (let k = 0; k < n; k++) {
      const q0 = h0 + p.leds[k] * c;
      const q1 = h1 + p.leds[k] * s;
      out[3 * k] = A[0] + U[0] * q0 + R[0] * q1;
      out[3 * k + 1] = A[1] + U[1] * q0 + R[1] * q1;
      out[3 * k + 2] = A[2] + U[2] * q0 + R[2] * q1;
    }
    hand[0] = A[0] + U[0] * h0 + R[0] * h1;
    hand[1] = A[1] + U[1] * h0 + R[1] * h1;
    hand[2] = A[2] + U[2] * h0 + R[2] * h1;
  }

  // Offset into p.runs.bytes of frame k's colours.
  function colourOffset(p, k) {
    const st = p.runs.starts;
    let i = p.lastRun;
    if (!(st[i] <= k && (i + 1 >= st.length || k < st[i + 1]))) {
      let lo = 0;
      let hi = st.length;
      while (lo < hi) {
        const mid = (lo + hi) >> 1;
        if (st[mid] <= k) lo = mid + 1;
        else hi = mid;
      }
      i = Math.max(0, lo - 1);
      p.lastRun = i;
    }
    return p.runs.offsets[i];
  }

  // floor(t * frame_rate), with products within 1e-9 of a whole number
  // taken as that number (t = 2.002 at 500 frames/s is frame 1001, though
  // 2.002 * 500 is 1000.9999999999999 in binary floating point).
  function frameAt(t) {
    const x = t * S.frameRate;
    const r = Math.round(x);
    const k = Math.abs(x - r) < 1e-9 ? r : Math.floor(x);
    return Math.max(0, Math.min(S.frames - 1, k));
  }

  // ---- Views and the viewport -------------------------------------------

  const VIEWS = ["front", "side", "top"];
  function screenOf(view, x, y, z) {
    if (view === "side") return [z, y];
    if (view === "top") return [x, -z];
    return [x, y];
  }

  function parseViewport(text) {
    if (text === null) return null;
    const v = text.split(",").map(Number);
    if (v.length !== 4 || !v.every(Number.isFinite) || !(v[2] > v[0]) || !(v[3] > v[1])) {
      report("viewport must be X0,Y0,X1,Y1 with X1 > X0 and Y1 > Y0, got " + text);
      return null;
    }
    return v;
  }
  const givenViewport = parseViewport(params.get("viewport"));

  // The smallest viewport of the stage's aspect that holds the box grown by
  // the margin, centred on it (as preview::camera::fit_viewport).
  function fitViewport(lo, hi, margin, w, h) {
    const cx = 0.5 * (lo[0] + hi[0]);
    const cy = 0.5 * (lo[1] + hi[1]);
    let vw = Math.max(0, hi[0] - lo[0]) + 2 * margin;
    let vh = Math.max(0, hi[1] - lo[1]) + 2 * margin;
    const aspect = w / h;
    if (vw / vh > aspect) vh = vw / aspect;
    else vw = vh * aspect;
    return [cx - 0.5 * vw, cy - 0.5 * vh, cx + 0.5 * vw, cy + 0.5 * vh];
  }

  function viewportFor(view, w, h) {
    if (view === "front" && givenViewport) return givenViewport;
    const [lo, hi] = S.reach_box;
    const a = screenOf(view, lo[0], lo[1], lo[2]);
    const b = screenOf(view, hi[0], hi[1], hi[2]);
    return fitViewport([Math.min(a[0], b[0]), Math.min(a[1], b[1])], [Math.max(a[0], b[0]), Math.max(a[1], b[1])], 0.1, w, h);
  }

  // ---- State --------------------------------------------------------------

  const state = {
    t: 0,
    playing: false,
    speed: 1,
    view: "front",
    trailBeats: 0.5,
    loop: false,
    loopFrom: 1,
    loopTo: 1,
    anchorT: 0,
    anchorWall: 0,
    click: true,
  };
  const tParam = params.get("t");
  if (tParam !== null) {
    const t = Number(tParam);
    if (Number.isFinite(t)) state.t = t;
    else report("t must be a number of seconds, got " + tParam);
  }
  const trailParam = params.get("trail");
  if (trailParam !== null && Number.isFinite(Number(trailParam))) {
    state.trailBeats = Math.max(0, Number(trailParam));
  }
  state.loopTo = Math.max(1, Math.min(S.bars, 4));

  // ---- The song and the beat click ---------------------------------------

  let audio = null;
  const songEl = $("song");
  if (songEl) {
    const bytes = decodeBase64(songEl.textContent.trim());
    const url = URL.createObjectURL(new Blob([bytes], { type: songEl.dataset.mime }));
    audio = new Audio();
    audio.preload = "auto";
    audio.src = url;
    audio.preservesPitch = true;
    $("click-label").hidden = true;
  }

  let actx = null;
  let scheduledBeat = -Infinity;
  function ensureAudioContext() {
    if (!actx && !audio && window.AudioContext) actx = new AudioContext();
    if (actx && actx.state === "suspended") actx.resume();
  }
  function tick(when, accent) {
    const o = actx.createOscillator();
    const g = actx.createGain();
    o.frequency.value = accent ? 1760 : 1175;
    g.gain.setValueAtTime(0.0001, when);
    g.gain.exponentialRampToValueAtTime(accent ? 0.35 : 0.2, when + 0.002);
    g.gain.exponentialRampToValueAtTime(0.0001, when + 0.05);
    o.connect(g).connect(actx.destination);
    o.start(when);
    o.stop(when + 0.06);
  }
  // Schedules the clicks of the beats in the next tenth of a second of show time.
  function scheduleClicks(t) {
    if (!actx || audio || !state.click || !state.playing) return;
    const now = actx.currentTime;
    const ahead = 0.1 * state.speed;
    let b = Math.max(Math.ceil(beatAt(t) - 1e-9), scheduledBeat + 1);
    for (; ; b++) {
      if (b < 0) continue;
      const tb = timeAtBeat(b);
      if (tb > t + ahead || tb >= S.end_s) break;
      tick(now + Math.max(0, (tb - t) / state.speed), b % S.beats_per_bar === 0);
      scheduledBeat = b;
    }
  }

  // ---- The clock ----------------------------------------------------------

  function clampT(t) {
    return Math.max(0, Math.min(S.end_s, t));
  }

  function currentT() {
    if (!state.playing) return state.t;
    if (audio) return audio.currentTime;
    return state.anchorT + ((performance.now() - state.anchorWall) / 1000) * state.speed;
  }

  function seek(t) {
    state.t = clampT(t);
    scheduledBeat = Math.ceil(beatAt(state.t) - 1e-9) - 1;
    if (audio) {
      try {
        audio.currentTime = state.t;
      } catch (e) {
        /* not loaded yet: the time is applied on play */
      }
    }
    state.anchorT = state.t;
    state.anchorWall = performance.now();
  }

  function setPlaying(on) {
    if (on === state.playing) return;
    state.t = currentT();
    if (on && state.t >= S.end_s) state.t = 0;
    state.playing = on;
    if (on) {
      ensureAudioContext();
      seek(state.t);
      if (audio) {
        audio.playbackRate = state.speed;
        const pr = audio.play();
        if (pr && pr.catch) pr.catch(() => setPlaying(false));
      }
    } else if (audio) {
      audio.pause();
    }
    $("play").textContent = on ? "pause" : "play";
    $("play").classList.toggle("on", on);
  }

  function setSpeed(v) {
    const t = currentT();
    state.speed = v;
    if (audio) audio.playbackRate = v;
    seek(t);
  }

  // ---- Drawing ------------------------------------------------------------

  const stage = $("stage");
  const ctx = stage.getContext("2d");
  let W = 1;
  let H = 1;

  function resize() {
    const r = stage.getBoundingClientRect();
    const dpr = window.devicePixelRatio || 1;
    W = Math.max(1, r.width);
    H = Math.max(1, r.height);
    stage.width = Math.round(W * dpr);
    stage.height = Math.round(H * dpr);
    ctx.setTransform(stage.width / W, 0, 0, stage.height / H, 0, 0);
    resizeTimeline();
  }

  const rgbCache = new Map();
  function rgb(r, g, b) {
    const key = (r << 16) | (g << 8) | b;
    let s = rgbCache.get(key);
    if (!s) {
      s = "rgb(" + r + "," + g + "," + b + ")";
      rgbCache.set(key, s);
    }
    return s;
  }

  // Scratch space for positions: grown when needed.
  let posBuf = new Float64Array(0);
  const handBuf = new Float64Array(3);
  const TRAIL_SAMPLES = 48;
  const TRAIL_BANDS = 8;
  const DOT_RADIUS = 3; // px: a dot 6 px across
  // A strip's trail is drawn from at most this many of its LEDs, evenly
  // spread (neighbouring LEDs' trails overlap into one band anyway).
  const TRAIL_LEDS = 16;

  function draw(t) {
    const view = state.view;
    const vp = viewportFor(view, W, H);
    const sx = W / (vp[2] - vp[0]);
    const sy = H / (vp[3] - vp[1]);
    const lut = S.display_lut;
    ctx.fillStyle = "#0b0d12";
    ctx.fillRect(0, 0, W, H);
    // A faint floor line at y = 0 in the front and side views.
    if (view !== "top" && vp[1] < 0 && vp[3] > 0) {
      ctx.strokeStyle = "#161a22";
      ctx.lineWidth = 1;
      ctx.beginPath();
      const fy = vp[3] * sy;
      ctx.moveTo(0, fy);
      ctx.lineTo(W, fy);
      ctx.stroke();
    }
    const k = frameAt(t);
    const beatNow = beatAt(t);
    const trailS = Math.max(0, timeAtBeat(beatNow) - timeAtBeat(beatNow - state.trailBeats));
    const frameS = 1 / S.frameRate;
    const samples = trailS < frameS ? 0 : Math.min(TRAIL_SAMPLES, Math.ceil(trailS / frameS));
    const dt = samples > 0 ? trailS / samples : 0;
    let total = 0;
    for (const p of S.props) total += p.nLeds;
    const need = 3 * total * (samples + 1);
    if (posBuf.length < need) posBuf = new Float64Array(need);
    const hands = [];
    // Positions: sample j is at t - j dt; prop p's LEDs from base[p].
    for (let j = 0; j <= samples; j++) {
      const tj = t - j * dt;
      const bj = j === 0 ? beatNow : beatAt(tj);
      let base = 3 * total * j;
      for (const p of S.props) {
        const view3 = posBuf.subarray(base, base + 3 * p.nLeds);
        placeLeds(p, bj, view3, handBuf);
        if (j === 0) hands.push([handBuf[0], handBuf[1], handBuf[2]]);
        base += 3 * p.nLeds;
      }
    }
    const toPx = (x, y, z) => {
      const s = screenOf(view, x, y, z);
      return [(s[0] - vp[0]) * sx, (vp[3] - s[1]) * sy];
    };
    // The trail: bands of samples, older ones fainter, in their frames' colours.
    if (samples > 0) {
      ctx.lineCap = "butt";
      ctx.lineJoin = "bevel";
      ctx.lineWidth = 2.5;
      const bands = Math.min(TRAIL_BANDS, samples);
      for (let band = bands - 1; band >= 0; band--) {
        const j0 = Math.floor((band * samples) / bands);
        const j1 = Math.floor(((band + 1) * samples) / bands);
        const mid = t - 0.5 * (j0 + j1) * dt;
        const km = frameAt(mid);
        const groups = new Map();
        let base = 0;
        for (const p of S.props) {
          const off = colourOffset(p, km);
          const bytes = p.runs.bytes;
          const stride = Math.max(1, Math.ceil(p.nLeds / TRAIL_LEDS));
          for (let l = 0; l < p.nLeds; l += stride) {
            const r = lut[bytes[off + 3 * l]];
            const g = lut[bytes[off + 3 * l + 1]];
            const b = lut[bytes[off + 3 * l + 2]];
            if (r + g + b === 0) continue;
            const key = rgb(r, g, b);
            let pts = groups.get(key);
            if (!pts) groups.set(key, (pts = []));
            pts.push(base + 3 * l);
          }
          base += 3 * p.nLeds;
        }
        ctx.globalAlpha = 0.75 * (1 - (band + 0.5) / bands);
        for (const [key, pts] of groups) {
          ctx.strokeStyle = key;
          ctx.beginPath();
          for (const o of pts) {
            for (let j = j0; j <= j1; j++) {
              const q = 3 * total * j + o;
              const s = toPx(posBuf[q], posBuf[q + 1], posBuf[q + 2]);
              if (j === j0) ctx.moveTo(s[0], s[1]);
              else ctx.lineTo(s[0], s[1]);
            }
          }
          ctx.stroke();
        }
      }
      ctx.globalAlpha = 1;
    }
    // Tethers and rods, faint, from the hand to the far ends.
    ctx.strokeStyle = "#2b313c";
    ctx.lineWidth = 1;
    ctx.beginPath();
    S.props.forEach((p, i) => {
      const h = hands[i];
      const a = toPx(h[0], h[1], h[2]);
      const sp = spanAt(p, beatNow);
      for (const e of p.ends) {
        let x;
        let y;
        let z;
        if (!sp) {
          x = p.anchor[0];
          y = p.anchor[1] - e;
          z = p.anchor[2];
        } else {
          const u = sp.phase0 + sp.per_beat * (beatNow - sp.beats[0]);
          const ta = sp.tether[1] + TAU * sp.tether[0] * u;
          const q0 = e * Math.cos(ta);
          const q1 = e * Math.sin(ta);
          x = h[0] + sp.up[0] * q0 + sp.right[0] * q1;
          y = h[1] + sp.up[1] * q0 + sp.right[1] * q1;
          z = h[2] + sp.up[2] * q0 + sp.right[2] * q1;
        }
        const b = toPx(x, y, z);
        ctx.moveTo(a[0], a[1]);
        ctx.lineTo(b[0], b[1]);
      }
    });
    ctx.stroke();
    // The glow of every LED, then every LED's dot in its frame colour on top.
    const dots = [];
    let base = 0;
    for (const p of S.props) {
      const off = colourOffset(p, k);
      const bytes = p.runs.bytes;
      for (let l = 0; l < p.nLeds; l++) {
        const q = base + 3 * l;
        const s = toPx(posBuf[q], posBuf[q + 1], posBuf[q + 2]);
        const key = rgb(lut[bytes[off + 3 * l]], lut[bytes[off + 3 * l + 1]], lut[bytes[off + 3 * l + 2]]);
        dots.push(s[0], s[1], key);
      }
      base += 3 * p.nLeds;
    }
    // One path per colour (a strip's LEDs mostly share one): its glows
    // as one faint fill, then its dots.
    const byColour = new Map();
    for (let i = 0; i < dots.length; i += 3) {
      let list = byColour.get(dots[i + 2]);
      if (!list) byColour.set(dots[i + 2], (list = []));
      list.push(dots[i], dots[i + 1]);
    }
    const fillDots = (radius) => {
      for (const [key, list] of byColour) {
        ctx.fillStyle = key;
        ctx.beginPath();
        for (let i = 0; i < list.length; i += 2) {
          ctx.moveTo(list[i] + radius, list[i + 1]);
          ctx.arc(list[i], list[i + 1], radius, 0, TAU);
        }
        ctx.fill();
      }
    };
    ctx.globalAlpha = 0.22;
    fillDots(3 * DOT_RADIUS);
    ctx.globalAlpha = 1;
    fillDots(DOT_RADIUS);
    updateReadout(t, k, beatNow);
  }

  // ---- The readout --------------------------------------------------------

  const swatchEls = [];
  function buildSwatches() {
    const box = $("swatches");
    box.textContent = "";
    swatchEls.length = 0;
    for (const p of S.props) {
      const el = document.createElement("span");
      el.className = "swatch";
      const dot = document.createElement("i");
      const name = document.createElement("span");
      name.textContent = p.name;
      el.append(dot, name);
      box.append(el);
      swatchEls.push(dot);
    }
  }

  function sectionAt(t) {
    for (const s of S.sections) if (s.time_s[0] <= t && t < s.time_s[1]) return s;
    return null;
  }

  function fmtTime(t) {
    const m = Math.floor(t / 60);
    const s = t - 60 * m;
    return m + ":" + (s < 10 ? "0" : "") + s.toFixed(3);
  }

  function updateReadout(t, k, beat) {
    document.body.dataset.frame = String(k);
    document.body.dataset.t = t.toFixed(6);
    if (bare) return;
    let text;
    if (beat < -1e-9) text = "count-in";
    else {
      const bpb = S.beats_per_bar;
      const b = Math.floor(beat + 1e-9);
      text = Math.floor(b / bpb) + 1 + "." + ((b % bpb) + 1);
    }
    $("barbeat").textContent = text;
    const sec = sectionAt(t);
    $("section").textContent = sec ? "bars " + sec.bars[0] + "-" + sec.bars[1] + "  " + sec.label : "";
    $("clock").textContent = fmtTime(t);
    S.props.forEach((p, i) => {
      const off = colourOffset(p, k);
      const lut = S.display_lut;
      const by = p.runs.bytes;
      // The swatch shows the prop's brightest LED of the frame.
      let best = off;
      let bestSum = -1;
      for (let l = 0; l < p.nLeds; l++) {
        const o = off + 3 * l;
        const sum = by[o] + by[o + 1] + by[o + 2];
        if (sum > bestSum) {
          bestSum = sum;
          best = o;
        }
      }
      if (swatchEls[i]) swatchEls[i].style.background = rgb(lut[by[best]], lut[by[best + 1]], lut[by[best + 2]]);
    });
  }

  // ---- The timeline -------------------------------------------------------

  const tl = $("timeline");
  const tctx = tl.getContext("2d");
  let TW = 1;
  let TH = 1;
  function resizeTimeline() {
    if (bare) return;
    const r = tl.getBoundingClientRect();
    const dpr = window.devicePixelRatio || 1;
    TW = Math.max(1, r.width);
    TH = Math.max(1, r.height);
    tl.width = Math.round(TW * dpr);
    tl.height = Math.round(TH * dpr);
    tctx.setTransform(tl.width / TW, 0, 0, tl.height / TH, 0, 0);
  }

  // The timeline's still parts are drawn once into a layer of their own
  // (again when the window, the show or the loop changes); each frame copies
  // it and draws the playhead.
  let layer = null;
  let layerKey = "";
  function drawTimeline(t) {
    if (bare) return;
    const key = TW + "x" + TH + ":" + state.loop + ":" + state.loopFrom + ":" + state.loopTo;
    if (!layer || layerKey !== key || layer.show !== S) {
      layer = document.createElement("canvas");
      layer.width = tl.width;
      layer.height = tl.height;
      layer.show = S;
      layerKey = key;
      const lc = layer.getContext("2d");
      lc.setTransform(tl.width / TW, 0, 0, tl.height / TH, 0, 0);
      drawTimelineStill(lc);
    }
    tctx.setTransform(1, 0, 0, 1, 0, 0);
    tctx.clearRect(0, 0, tl.width, tl.height);
    tctx.drawImage(layer, 0, 0);
    tctx.setTransform(tl.width / TW, 0, 0, tl.height / TH, 0, 0);
    tctx.fillStyle = "#e8ecf2";
    tctx.fillRect((t / Math.max(S.end_s, 1e-6)) * TW - 1, 0, 2, TH);
  }

  function drawTimelineStill(tctx) {
    const end = Math.max(S.end_s, 1e-6);
    const X = (tt) => (tt / end) * TW;
    // Sections: alternating quiet bands.
    S.sections.forEach((s, i) => {
      tctx.fillStyle = i % 2 ? "#151a23" : "#11151c";
      tctx.fillRect(X(s.time_s[0]), 0, X(s.time_s[1]) - X(s.time_s[0]), TH);
    });
    // The loop range.
    if (state.loop) {
      tctx.fillStyle = "rgba(90, 130, 180, 0.22)";
      const a = X(timeAtBar(state.loopFrom));
      tctx.fillRect(a, 0, X(timeAtBar(state.loopTo + 1)) - a, TH);
    }
    // Bars: a tick each, a number where there is room.
    const pxPerBar = TW / Math.max(1, S.bars);
    const every = Math.max(1, Math.ceil(28 / pxPerBar));
    tctx.fillStyle = "#3a414d";
    tctx.font = "10px system-ui, sans-serif";
    for (let b = 1; b <= S.bars; b++) {
      const x = X(timeAtBar(b));
      tctx.fillRect(x, 0, 1, b % 4 === 1 ? 10 : 5);
      if ((b - 1) % every === 0) {
        tctx.fillStyle = "#59606c";
        tctx.fillText(String(b), x + 2, 10);
        tctx.fillStyle = "#3a414d";
      }
    }
    // Cue changes: one row of marks per prop.
    const rows = S.props.length;
    S.props.forEach((p, i) => {
      const y = 14 + ((TH - 18) * (i + 0.5)) / Math.max(1, rows);
      tctx.fillStyle = "#7d8796";
      let last = -1;
      for (const c of p.changes) {
        const x = Math.round(X(c));
        if (x === last) continue;
        last = x;
        tctx.fillRect(x, y - 2, 1, 4);
      }
    });
  }

  function scrubTo(ev) {
    const r = tl.getBoundingClientRect();
    const f = Math.max(0, Math.min(1, (ev.clientX - r.left) / r.width));
    seek(f * S.end_s);
  }

  // ---- Controls ---------------------------------------------------------

  function setView(v) {
    state.view = v;
    $("view-name").textContent = v + " view";
    for (const b of document.querySelectorAll("#views button")) b.classList.toggle("on", b.dataset.view === v);
  }

  function trailText() {
    const b = state.trailBeats;
    $("trail-text").textContent = b <= 0 ? "off" : b >= S.beats_per_bar - 1e-9 ? "1 bar" : b.toFixed(2) + " beat";
  }

  function setupControls() {
    $("play").addEventListener("click", () => setPlaying(!state.playing));
    $("speed").addEventListener("change", (e) => setSpeed(Number(e.target.value)));
    const trail = $("trail");
    // The slider runs from off through a few frames to a whole bar (squared, so short trails are fine-grained).
    trail.value = String(Math.sqrt(Math.min(1, state.trailBeats / S.beats_per_bar)));
    trail.addEventListener("input", () => {
      const f = Number(trail.value);
      state.trailBeats = f * f * S.beats_per_bar;
      trailText();
    });
    trailText();
    const from = $("loop-from");
    const to = $("loop-to");
    from.max = to.max = $("jump-bar").max = String(S.bars);
    from.value = String(state.loopFrom);
    to.value = String(state.loopTo);
    const readLoop = () => {
      const a = Math.max(1, Math.min(S.bars, Math.floor(Number(from.value)) || 1));
      const b = Math.max(a, Math.min(S.bars, Math.floor(Number(to.value)) || a));
      state.loopFrom = a;
      state.loopTo = b;
      state.loop = $("loop-on").checked;
      if (state.loop) {
        const t = currentT();
        if (t < timeAtBar(a) || t >= timeAtBar(b + 1)) seek(timeAtBar(a));
      }
    };
    for (const el of [from, to, $("loop-on")]) el.addEventListener("change", readLoop);
    const jump = () => {
      const b = Math.max(1, Math.min(S.bars, Math.floor(Number($("jump-bar").value)) || 1));
      seek(timeAtBar(b));
    };
    $("jump").addEventListener("click", jump);
    $("jump-bar").addEventListener("keydown", (e) => {
      if (e.key === "Enter") jump();
    });
    for (const b of document.querySelectorAll("#views button")) b.addEventListener("click", () => setView(b.dataset.view));
    $("click").addEventListener("change", (e) => {
      state.click = e.target.checked;
    });
    let dragging = false;
    tl.addEventListener("pointerdown", (e) => {
      dragging = true;
      tl.setPointerCapture(e.pointerId);
      scrubTo(e);
    });
    tl.addEventListener("pointermove", (e) => {
      if (dragging) scrubTo(e);
    });
    tl.addEventListener("pointerup", () => {
      dragging = false;
    });
    document.addEventListener("keydown", (e) => {
      const tag = e.target && e.target.tagName;
      if (tag === "INPUT" || tag === "SELECT") return;
      if (e.key === " ") {
        e.preventDefault();
        setPlaying(!state.playing);
      } else if (e.key === "v") {
        setView(VIEWS[(VIEWS.indexOf(state.view) + 1) % VIEWS.length]);
      }
    });
  }

  // ---- The live show (watch mode) ---------------------------------------

  function listen() {
    if (document.body.dataset.live !== "true" || !window.EventSource) return;
    const es = new EventSource("/events");
    const box = $("errors");
    es.addEventListener("show", (e) => {
      const t = currentT();
      S = prepareShow(JSON.parse(e.data));
      buildSwatches();
      box.hidden = true;
      box.textContent = "";
      document.body.dataset.version = e.lastEventId;
      state.t = clampT(t);
      if (state.playing) seek(clampT(t));
    });
    es.addEventListener("errors", (e) => {
      box.textContent = JSON.parse(e.data).text;
      box.hidden = false;
      document.body.dataset.version = e.lastEventId;
    });
  }

  // ---- The frame loop -----------------------------------------------------

  const stamps = [];
  let drawMs = 0;
  function frame(now) {
    const t0 = performance.now();
    let t = currentT();
    if (state.playing) {
      if (state.loop) {
        const a = timeAtBar(state.loopFrom);
        const b = timeAtBar(state.loopTo + 1);
        if (t >= b || t < a - 0.05) {
          seek(a);
          t = a;
        }
      } else if (t >= S.end_s) {
        state.t = S.end_s;
        setPlaying(false);
        t = S.end_s;
      }
      scheduleClicks(t);
    }
    draw(clampT(t));
    drawTimeline(clampT(t));
    const spent = performance.now() - t0;
    drawMs = drawMs === 0 ? spent : 0.95 * drawMs + 0.05 * spent;
    stamps.push(now);
    if (stamps.length > 120) stamps.shift();
    if (stamps.length > 1 && stamps.length % 10 === 0) {
      const fps = ((stamps.length - 1) * 1000) / (stamps[stamps.length - 1] - stamps[0]);
      document.body.dataset.fps = fps.toFixed(1);
      document.body.dataset.drawMs = drawMs.toFixed(2);
      if (!bare) $("fps").textContent = fps.toFixed(0) + " fps, " + drawMs.toFixed(1) + " ms";
    }
    requestAnimationFrame(frame);
  }

  buildSwatches();
  setupControls();
  setView("front");
  resize();
  window.addEventListener("resize", resize);
  seek(state.t);
  draw(clampT(state.t));
  drawTimeline(clampT(state.t));
  document.body.dataset.ready = "true";
  listen();
  if (params.has("play") && tParam === null) setPlaying(true);
  requestAnimationFrame(frame);
})();
