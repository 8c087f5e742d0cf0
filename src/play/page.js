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
      p.along = Float64Array.from(p.leds);
      p.runs = decodeRuns(decodeBase64(p.colours), p.nLeds);
      p.colours = null;
      p.lastRun = 0;
    }
    show.frameRate = show.frame_rate;
    return show;
  }

  let S = prepareShow(JSON.parse($("show-data").textContent));
  // Counts the shows received (a new one redraws the trail).
  let showVersion = 0;

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

  // Prop p at beat `beat`: its hand and the unit vector along it (from the
  // grip towards the head), stage metres, into out[o .. o + 6]. An LED
  // `along` metres from the grip sits at hand + along * direction (data.rs),
  // so the terms are evaluated once per prop, not once per LED.
  function placeProp(p, beat, out, o) {
    const sp = spanAt(p, beat);
    if (!sp) {
      const a = p.anchor;
      out[o] = a[0];
      out[o + 1] = a[1];
      out[o + 2] = a[2];
      out[o + 3] = 0;
      out[o + 4] = -1;
      out[o + 5] = 0;
      return;
    }
    const u = sp.phase0 + sp.per_beat * (beat - sp.beats[0]);
    let h0 = 0;
    let h1 = 0;
    const terms = sp.hand;
    for (let i = 0; i < terms.length; i++) {
      const r = terms[i];
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
    out[o] = A[0] + U[0] * h0 + R[0] * h1;
    out[o + 1] = A[1] + U[1] * h0 + R[1] * h1;
    out[o + 2] = A[2] + U[2] * h0 + R[2] * h1;
    out[o + 3] = U[0] * c + R[0] * s;
    out[o + 4] = U[1] * c + R[1] * s;
    out[o + 5] = U[2] * c + R[2] * s;
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

  // The song of a `<script id="song">` element, or null without one.
  function songOf(el) {
    if (!el) return null;
    const bytes = decodeBase64(el.textContent.trim());
    const a = new Audio();
    a.preload = "auto";
    a.src = URL.createObjectURL(new Blob([bytes], { type: el.dataset.mime }));
    a.preservesPitch = true;
    return a;
  }
  let audio = songOf($("song"));
  $("click-label").hidden = audio !== null;
  document.body.dataset.song = S.song || "";

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
      // The trail's colours are scaled by its fading: keep the cache small.
      if (rgbCache.size >= 8192) rgbCache.clear();
      s = "rgb(" + r + "," + g + "," + b + ")";
      rgbCache.set(key, s);
    }
    return s;
  }

  // ---- The screen mapping ------------------------------------------------

  // The current view's map from stage metres to window pixels, linear:
  // px = P[0] x + P[1] y + P[2] z + P[3], py = P[4] x + P[5] y + P[6] z + P[7].
  const P = new Float64Array(8);
  function setProjection(view, vp) {
    const sx = W / (vp[2] - vp[0]);
    const sy = H / (vp[3] - vp[1]);
    P.fill(0);
    // The screen's x is the stage's x (z in the side view); its y, up, is
    // the stage's y (-z in the top view), as screenOf.
    if (view === "side") P[2] = sx;
    else P[0] = sx;
    P[3] = -vp[0] * sx;
    if (view === "top") P[6] = sy;
    else P[5] = -sy;
    P[7] = vp[3] * sy;
  }

  // Every prop at beat `beat` on the screen: the hand's pixel and the pixels
  // per metre along the prop, into out[o + 4 i ..] for prop i.
  const stageBuf = new Float64Array(6);
  function screenProps(beat, out, o) {
    const props = S.props;
    for (let i = 0; i < props.length; i++) {
      placeProp(props[i], beat, stageBuf, 0);
      const q = o + 4 * i;
      const x = stageBuf[0];
      const y = stageBuf[1];
      const z = stageBuf[2];
      const dx = stageBuf[3];
      const dy = stageBuf[4];
      const dz = stageBuf[5];
      out[q] = P[0] * x + P[1] * y + P[2] * z + P[3];
      out[q + 1] = P[4] * x + P[5] * y + P[6] * z + P[7];
      out[q + 2] = P[0] * dx + P[1] * dy + P[2] * dz;
      out[q + 3] = P[4] * dx + P[5] * dy + P[6] * dz;
    }
  }

  // ---- The trail ------------------------------------------------------------

  // The trail is kept in a canvas of its own, opaque black: each frame fades
  // it by one translucent black fill (the fade reaches black exactly; a
  // transparent canvas faded with destination-out keeps a faint floor), then
  // draws every LED's path since the last frame in the colour of its frame.
  // The stage adds it onto its background ("lighter": black adds nothing).
  // After a trail's length its light is down to TRAIL_LEFT of what it was.
  const trailCanvas = document.createElement("canvas");
  const tctx2 = trailCanvas.getContext("2d", { alpha: false });
  const trail = { t: NaN, on: false, view: "", valid: false };
  // What the trail was drawn for: the viewport, the window, the trail's
  // length and the show; any change draws it again.
  const trailKey = new Float64Array(8);
  const keyNow = new Float64Array(8);
  const TRAIL_ALPHA = 0.7;
  const TRAIL_WIDTH = 2.5; // px
  const TRAIL_LEFT = 1 / 40;
  const TRAIL_POINTS_PER_S = 240; // points along each LED's path, per second of show time
  const TRAIL_CHUNK_S = 1 / 60; // a rebuilt trail is drawn as if played at this frame time
  const TRAIL_MAX_CHUNKS = 240;
  let pathBuf = new Float64Array(0);

  function clearTrail() {
    tctx2.setTransform(1, 0, 0, 1, 0, 0);
    tctx2.globalAlpha = 1;
    tctx2.fillStyle = "#000";
    tctx2.fillRect(0, 0, trailCanvas.width, trailCanvas.height);
    tctx2.setTransform(stage.width / W, 0, 0, stage.height / H, 0, 0);
  }

  // The last LED of the stretch from q (before m) whose neighbours are at
  // most gapM metres apart along the prop.
  function denseEnd(along, q, m, gapM) {
    let e = q;
    while (e + 1 < m && Math.abs(along[e + 1] - along[e]) <= gapM) e++;
    return e;
  }

  // The end of the run of LEDs from l sharing frame colours by[off + 3 l ..].
  function colourRunEnd(by, off, l, n) {
    const r = by[off + 3 * l];
    const g = by[off + 3 * l + 1];
    const b = by[off + 3 * l + 2];
    let m = l + 1;
    while (m < n && by[off + 3 * m] === r && by[off + 3 * m + 1] === g && by[off + 3 * m + 2] === b) m++;
    return m;
  }

  // Draws every LED's path from ta to tb (straight pieces, TRAIL_POINTS_PER_S)
  // at `alpha`, in the colour of the frame in the middle. Each channel keeps
  // the brighter of the trail and the new light ("lighten", the colour
  // scaled by alpha): a place passed again is not made brighter than one
  // pass. LEDs closer together than the trail's width sweep one area: a
  // run of them is that area (the first LED's path, the last one's back),
  // filled; every other LED, and the area's first and last, draws its path
  // at the trail's width.
  function strokeTrail(ta, tb, alpha) {
    const steps = Math.max(1, Math.min(64, Math.ceil((tb - ta) * TRAIL_POINTS_PER_S)));
    const props = S.props;
    const np = props.length;
    const need = 4 * np * (steps + 1);
    if (pathBuf.length < need) pathBuf = new Float64Array(need);
    for (let j = 0; j <= steps; j++) screenProps(beatAt(ta + ((tb - ta) * j) / steps), pathBuf, 4 * np * j);
    const k = frameAt(0.5 * (ta + tb));
    const lut = S.display_lut;
    const c = tctx2;
    c.globalAlpha = 1;
    c.globalCompositeOperation = "lighten";
    c.lineWidth = TRAIL_WIDTH;
    c.lineCap = "butt";
    c.lineJoin = "round";
    const last = 4 * np * steps;
    for (let i = 0; i < np; i++) {
      const p = props[i];
      const off = colourOffset(p, k);
      const by = p.runs.bytes;
      const along = p.along;
      const len = Math.hypot(pathBuf[last + 4 * i + 2], pathBuf[last + 4 * i + 3]);
      const gapM = len > 0 ? TRAIL_WIDTH / len : Infinity;
      for (let l = 0; l < p.nLeds; ) {
        const m = colourRunEnd(by, off, l, p.nLeds);
        const o = off + 3 * l;
        if (by[o] + by[o + 1] + by[o + 2] > 0) {
          c.strokeStyle = rgb(Math.round(alpha * lut[by[o]]), Math.round(alpha * lut[by[o + 1]]), Math.round(alpha * lut[by[o + 2]]));
          c.fillStyle = c.strokeStyle;
          let areas = false;
          c.beginPath();
          for (let q = l; q < m; ) {
            const e = denseEnd(along, q, m, gapM);
            if (e > q) {
              areas = true;
              for (let j = 0; j <= steps; j++) {
                const v = 4 * (np * j + i);
                const x = pathBuf[v] + along[q] * pathBuf[v + 2];
                const y = pathBuf[v + 1] + along[q] * pathBuf[v + 3];
                if (j === 0) c.moveTo(x, y);
                else c.lineTo(x, y);
              }
              for (let j = steps; j >= 0; j--) {
                const v = 4 * (np * j + i);
                c.lineTo(pathBuf[v] + along[e] * pathBuf[v + 2], pathBuf[v + 1] + along[e] * pathBuf[v + 3]);
              }
              c.closePath();
            }
            q = e + 1;
          }
          if (areas) c.fill();
          // The single LEDs' paths, and the paths of an area's first and
          // last LEDs (its sides: an outline across its ends would overlap
          // the next frame's area).
          c.beginPath();
          for (let q = l; q < m; ) {
            const e = denseEnd(along, q, m, gapM);
            for (let d = q; d <= e; d += Math.max(1, e - q)) {
              for (let j = 0; j <= steps; j++) {
                const v = 4 * (np * j + i);
                const x = pathBuf[v] + along[d] * pathBuf[v + 2];
                const y = pathBuf[v + 1] + along[d] * pathBuf[v + 3];
                if (j === 0) c.moveTo(x, y);
                else c.lineTo(x, y);
              }
            }
            q = e + 1;
          }
          c.stroke();
        }
        l = m;
      }
    }
    c.globalCompositeOperation = "source-over";
  }

  // Brings the trail to time t: the part since the last frame when the
  // trail is still the one drawn then, else the whole trail again (a jump,
  // a new view, window, show or trail length).
  function updateTrail(t, trailS, view, vp) {
    if (!(trailS > 0)) {
      trail.on = false;
      trail.valid = false;
      return;
    }
    if (trailCanvas.width !== stage.width || trailCanvas.height !== stage.height) {
      trailCanvas.width = stage.width;
      trailCanvas.height = stage.height;
      trail.valid = false;
    }
    trail.on = true;
    keyNow[0] = vp[0];
    keyNow[1] = vp[1];
    keyNow[2] = vp[2];
    keyNow[3] = vp[3];
    keyNow[4] = W;
    keyNow[5] = H;
    keyNow[6] = state.trailBeats;
    keyNow[7] = showVersion;
    let same = trail.valid && trail.view === view;
    for (let i = 0; same && i < 8; i++) same = keyNow[i] === trailKey[i];
    const tau = trailS / Math.log(1 / TRAIL_LEFT);
    if (!same || !(t >= trail.t) || t - trail.t > trailS) {
      clearTrail();
      const start = Math.max(0, t - trailS);
      const n = Math.min(TRAIL_MAX_CHUNKS, Math.ceil((t - start) / TRAIL_CHUNK_S - 1e-9));
      for (let c = 0; c < n; c++) {
        const ta = start + ((t - start) * c) / n;
        const tb = start + ((t - start) * (c + 1)) / n;
        strokeTrail(ta, tb, TRAIL_ALPHA * Math.exp(-(t - tb) / tau));
      }
    } else if (t > trail.t) {
      tctx2.globalAlpha = 1 - Math.exp(-(t - trail.t) / tau);
      tctx2.fillStyle = "#000";
      tctx2.fillRect(0, 0, W, H);
      strokeTrail(trail.t, t, TRAIL_ALPHA);
    }
    trail.t = t;
    trail.view = view;
    trail.valid = true;
    trailKey.set(keyNow);
  }

  // ---- The stage ------------------------------------------------------------

  const DOT_RADIUS = 3; // px: a dot 6 px across
  const GLOW_RADIUS = 9; // px
  const GLOW_ALPHA = 0.22;
  let now = new Float64Array(4 * 8);

  // Every LED's dot (or glow) of `radius` px in frame k's colours, drawn
  // as the union of the dots: a stretch of LEDs of one colour closer
  // together than half the radius is one round-capped line through them
  // (its edge within 0.04 radius of the dots' scalloped one), the others
  // one circle each, one path per run of one colour.
  function fillDots(k, radius) {
    const lut = S.display_lut;
    const props = S.props;
    ctx.lineCap = "round";
    ctx.lineWidth = 2 * radius;
    for (let i = 0; i < props.length; i++) {
      const p = props[i];
      const off = colourOffset(p, k);
      const by = p.runs.bytes;
      const along = p.along;
      const hx = now[4 * i];
      const hy = now[4 * i + 1];
      const ex = now[4 * i + 2];
      const ey = now[4 * i + 3];
      const len = Math.hypot(ex, ey);
      const gapM = len > 0 ? (0.5 * radius) / len : Infinity;
      for (let l = 0; l < p.nLeds; ) {
        const m = colourRunEnd(by, off, l, p.nLeds);
        const o = off + 3 * l;
        const colour = rgb(lut[by[o]], lut[by[o + 1]], lut[by[o + 2]]);
        let lines = false;
        let dots = false;
        ctx.beginPath();
        for (let q = l; q < m; ) {
          const e = denseEnd(along, q, m, gapM);
          if (e > q && Math.abs(along[e] - along[q]) * len > 1e-3) {
            lines = true;
            ctx.moveTo(hx + along[q] * ex, hy + along[q] * ey);
            ctx.lineTo(hx + along[e] * ex, hy + along[e] * ey);
          } else dots = true;
          q = e + 1;
        }
        if (lines) {
          ctx.strokeStyle = colour;
          ctx.stroke();
        }
        if (dots) {
          ctx.beginPath();
          for (let q = l; q < m; ) {
            const e = denseEnd(along, q, m, gapM);
            if (!(e > q && Math.abs(along[e] - along[q]) * len > 1e-3)) {
              for (let d = q; d <= e; d++) {
                const x = hx + along[d] * ex;
                const y = hy + along[d] * ey;
                ctx.moveTo(x + radius, y);
                ctx.arc(x, y, radius, 0, TAU);
              }
            }
            q = e + 1;
          }
          ctx.fillStyle = colour;
          ctx.fill();
        }
        l = m;
      }
    }
  }

  function draw(t) {
    const view = state.view;
    const vp = viewportFor(view, W, H);
    setProjection(view, vp);
    const k = frameAt(t);
    const beatNow = beatAt(t);
    const trailS = Math.max(0, timeAtBeat(beatNow) - timeAtBeat(beatNow - state.trailBeats));
    updateTrail(t, trailS < 1 / S.frameRate ? 0 : trailS, view, vp);
    ctx.globalAlpha = 1;
    ctx.fillStyle = "#0b0d12";
    ctx.fillRect(0, 0, W, H);
    if (trail.on) {
      ctx.globalCompositeOperation = "lighter";
      ctx.drawImage(trailCanvas, 0, 0, W, H);
      ctx.globalCompositeOperation = "source-over";
    }
    // A faint floor line at y = 0 in the front and side views.
    if (view !== "top" && vp[1] < 0 && vp[3] > 0) {
      ctx.strokeStyle = "#161a22";
      ctx.lineWidth = 1;
      ctx.beginPath();
      const fy = P[7];
      ctx.moveTo(0, fy);
      ctx.lineTo(W, fy);
      ctx.stroke();
    }
    const np = S.props.length;
    if (now.length < 4 * np) now = new Float64Array(4 * np);
    screenProps(beatNow, now, 0);
    // Tethers and rods, faint, from the hand to the far ends.
    ctx.strokeStyle = "#2b313c";
    ctx.lineWidth = 1;
    ctx.beginPath();
    for (let i = 0; i < np; i++) {
      const hx = now[4 * i];
      const hy = now[4 * i + 1];
      for (const e of S.props[i].ends) {
        ctx.moveTo(hx, hy);
        ctx.lineTo(hx + e * now[4 * i + 2], hy + e * now[4 * i + 3]);
      }
    }
    ctx.stroke();
    ctx.globalAlpha = GLOW_ALPHA;
    fillDots(k, GLOW_RADIUS);
    ctx.globalAlpha = 1;
    fillDots(k, DOT_RADIUS);
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

  // A live page told of a show with another song takes the song from the
  // page its server now serves (the only other thing it answers), and the
  // clock goes on where it was.
  let songWanted = S.song;
  function replaceSong(id) {
    fetch("/", { cache: "no-store" })
      .then((r) => r.text())
      .then((html) => {
        if (songWanted !== id) return; // a newer show came meanwhile
        const doc = new DOMParser().parseFromString(html, "text/html");
        const wasPlaying = state.playing;
        setPlaying(false);
        const t = state.t;
        if (audio) URL.revokeObjectURL(audio.src);
        audio = songOf(doc.getElementById("song"));
        $("click-label").hidden = audio !== null;
        document.body.dataset.song = id || "";
        seek(t);
        if (wasPlaying) setPlaying(true);
      })
      .catch((e) => report("cannot fetch the new song: " + e));
  }

  function listen() {
    if (document.body.dataset.live !== "true" || !window.EventSource) return;
    const es = new EventSource("/events");
    const box = $("errors");
    es.addEventListener("show", (e) => {
      const t = currentT();
      S = prepareShow(JSON.parse(e.data));
      showVersion++;
      if (S.song !== songWanted) {
        songWanted = S.song;
        replaceSong(S.song);
      }
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
  // Where the page's parts are, for tests and readers: the window, the
  // document's scroll size and the boxes of the readout, the stage, the
  // controls and each control, `[left, top, right, bottom]` px, as JSON in
  // `data-layout` on the body.
  function probeLayout() {
    const box = (el) => {
      const r = el.getBoundingClientRect();
      return [r.left, r.top, r.right, r.bottom].map((v) => Math.round(v * 10) / 10);
    };
    const d = document.documentElement;
    document.body.dataset.layout = JSON.stringify({
      window: [window.innerWidth, window.innerHeight],
      scroll: [d.scrollWidth, d.scrollHeight],
      top: box($("top")),
      stage: box(stage),
      controls: box($("controls")),
      items: Array.from($("row").children).map(box),
    });
  }
  resize();
  probeLayout();
  window.addEventListener("resize", resize);
  // The controls wrapping onto more lines changes the stage's height.
  if (window.ResizeObserver) {
    new ResizeObserver(() => {
      resize();
      probeLayout();
    }).observe($("stage-wrap"));
  }
  seek(state.t);
  draw(clampT(state.t));
  drawTimeline(clampT(state.t));
  document.body.dataset.ready = "true";
  listen();
  if (params.has("play") && tParam === null) setPlaying(true);
  requestAnimationFrame(frame);
})();
