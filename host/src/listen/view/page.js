'use strict';
// The live page: server-sent events in, a canvas and a few elements out.
// Everything is drawn from what the messages say; nothing is fetched.
(function () {
  const WINDOW_S = 10;
  const $ = (id) => document.getElementById(id);
  const css = getComputedStyle(document.documentElement);
  const colour = (name) => css.getPropertyValue(name).trim();
  const S = { rate: null, pts: [], beats: [], paused: false, updates: 0,
    adcBits: null, times: [] };

  function text(el, s) { if (el.textContent !== s) el.textContent = s; }
  function num(v) { return typeof v === 'number' && isFinite(v); }
  function pct(v) { return (v * 100).toFixed(v < 0.1 ? 2 : 1) + ' %'; }

  function addSamples(list) {
    for (const p of list) {
      const last = S.pts.length ? S.pts[S.pts.length - 1][0] : null;
      if (last !== null && p[0] <= last) S.pts = [];
      S.pts.push(p);
    }
    if (!S.pts.length || !S.rate) return;
    const left = S.pts[S.pts.length - 1][0] - WINDOW_S * S.rate;
    let cut = 0;
    while (cut < S.pts.length && S.pts[cut][0] <= left) cut++;
    if (cut) S.pts.splice(0, cut);
  }

  function addBeats(list) {
    for (const b of list) S.beats.push(b);
    if (S.beats.length > 64) S.beats.splice(0, S.beats.length - 64);
    let median = null;
    for (const b of S.beats) if (num(b.median_hr_bpm)) median = b.median_hr_bpm;
    if (median !== null) {
      $('hr').dataset.bpm = String(median);
      text($('hr'), String(Math.round(median)));
    }
    const b = S.beats[S.beats.length - 1];
    if (!b) return;
    $('quality').dataset.quality = String(b.quality);
    text($('quality'), b.quality.toFixed(2) + ' · ' + b.verdict);
    const hr = num(b.hr_bpm) ? b.hr_bpm.toFixed(1) + ' bpm' : 'no interval';
    const at = num(b.time_s) ? ' at ' + b.time_s.toFixed(1) + ' s' : '';
    text($('lastbeat'), hr + at);
  }

  function setState(name) {
    const el = $('state');
    el.dataset.state = name;
    text(el, name.replace(/_/g, ' '));
    $('hr').classList.toggle('stale', name !== 'good');
  }

  function setGauges(g) {
    for (const el of document.querySelectorAll('[data-gauge]')) {
      const name = el.dataset.gauge;
      if (!(name in g)) continue;
      const v = g[name];
      el.dataset.updates = String(Number(el.dataset.updates) + 1);
      el.dataset.value = num(v) ? String(v) : '';
      let share = 0, shown = '–';
      if (num(v) && name === 'pulse_codes') {
        // Codes on a log scale: one step per bit of the ADC.
        const bits = S.adcBits || 16;
        share = Math.log2(1 + Math.max(v, 0)) / bits;
        shown = v.toFixed(v < 10 ? 1 : 0) + ' codes (' + Math.log2(Math.max(v, 1)).toFixed(1) + ' bits)';
      } else if (num(v)) {
        share = v;
        shown = pct(v);
      }
      el.querySelector('.bar b').style.width = (Math.min(Math.max(share, 0), 1) * 100) + '%';
      text(el.querySelector('.gval'), shown);
    }
  }

  function setChecks(list) {
    if (!Array.isArray(list)) return;
    const box = $('checks');
    for (const c of list) {
      if (!c || typeof c.name !== 'string') continue;
      let li = box.querySelector('[data-check="' + CSS.escape(c.name) + '"]');
      if (!li) {
        li = document.createElement('li');
        li.dataset.check = c.name;
        for (const k of ['cname', 'cval', 'cverdict', 'cmsg']) {
          const s = document.createElement('span'); s.className = k; li.appendChild(s);
        }
        text(li.querySelector('.cname'), c.name.replace(/_/g, ' '));
        box.appendChild(li);
      }
      // The contract's names have underscores; a report in words is taken too.
      const verdict = typeof c.verdict === 'string' ? c.verdict.replace(/ /g, '_') : '';
      li.dataset.verdict = verdict;
      text(li.querySelector('.cval'), num(c.value) ? Number(c.value.toPrecision(3)).toString() : '');
      text(li.querySelector('.cverdict'), verdict.replace(/_/g, ' '));
      text(li.querySelector('.cmsg'), typeof c.message === 'string' ? c.message : '');
    }
  }

  function setAdvice(list) {
    const box = $('advice');
    box.replaceChildren();
    for (const a of Array.isArray(list) ? list : []) {
      const li = document.createElement('li');
      li.textContent = typeof a === 'string' ? a : (a && (a.text || a.message)) || JSON.stringify(a);
      box.appendChild(li);
    }
    $('advice-hint').hidden = box.children.length > 0;
  }

  function setLink(l) {
    const el = $('link');
    for (const k of ['frames', 'damaged', 'lost']) {
      el.dataset[k] = String(l[k]);
      text($('link-' + k), String(l[k]));
    }
  }

  function setBoard(b) {
    const el = $('board');
    el.dataset.connected = String(!!b.connected);
    el.classList.toggle('quiet', !!(b.connected && b.quiet));
    const where = b.port ? ' on ' + b.port : '';
    text(el, !b.connected ? (b.port ? 'board unplugged, waiting for it' : 'board not connected yet')
      : b.quiet ? 'board connected' + where + ', but quiet' : 'board connected' + where);
  }

  function setHello(h) {
    S.adcBits = num(h.adc_bits) && h.adc_bits > 0 ? h.adc_bits : null;
    text($('hello'), 'firmware ' + h.firmware + ' · ' + h.sample_rate_hz + ' Hz · ' + h.detector);
  }

  function addNotices(list, fresh) {
    const box = $('notices');
    if (fresh) box.replaceChildren();
    for (const n of list) {
      const li = document.createElement('li'); li.textContent = n; box.prepend(li);
    }
    while (box.children.length > 6) box.lastChild.remove();
  }

  function apply(m) {
    S.updates += 1;
    document.body.dataset.updates = String(S.updates);
    if (m.snapshot) { S.pts = []; S.beats = []; }
    if (num(m.rate_hz)) S.rate = m.rate_hz;
    if (m.hello) setHello(m.hello);
    if (m.samples) addSamples(m.samples);
    if (m.beats || m.snapshot) addBeats(m.beats || []);
    if (m.state) setState(m.state);
    if (m.gauges) setGauges(m.gauges);
    if (m.checks) setChecks(m.checks);
    if (m.advice) setAdvice(m.advice);
    if (m.link) setLink(m.link);
    if (m.board) setBoard(m.board);
    if (m.notices || m.snapshot) addNotices(m.notices || [], m.snapshot);
    const now = performance.now();
    S.times.push(now);
    while (S.times.length && S.times[0] < now - 2000) S.times.shift();
    const n = S.times.length, span = (S.times[n - 1] - S.times[0]) / 1000;
    text($('stream'), n > 2 && span > 0 ? 'live · ' + ((n - 1) / span).toFixed(1) + ' updates/s' : 'live');
    if (!S.paused) draw();
  }

  // The waveform: input above, band-passed below, each scaled to its own
  // lane; the newest sample at the right edge.
  // Scaled to the 1st to 99th percentile of what is shown, so a step (a
  // finger put back) does not flatten the pulses; the rest is clipped to
  // the lane.
  function lane(ctx, pts, k, top, height, left, span, x0, width, stroke) {
    const vs = [];
    for (const p of pts) if (num(p[k])) vs.push(p[k]);
    if (!vs.length) return { drawn: 0, y: () => null };
    vs.sort((a, b) => a - b);
    let lo = vs[Math.floor(0.01 * (vs.length - 1))], hi = vs[Math.ceil(0.99 * (vs.length - 1))];
    if (hi - lo < 1e-9) { hi += 0.5; lo -= 0.5; }
    ctx.save(); ctx.beginPath(); ctx.rect(0, top, x0 * 2 + width, height); ctx.clip();
    const m = 8;
    const y = (v) => top + m + (1 - (v - lo) / (hi - lo)) * (height - 2 * m);
    const x = (i) => x0 + (i - left) / span * width;
    ctx.strokeStyle = stroke; ctx.lineWidth = 1.5; ctx.beginPath();
    let drawn = 0, pen = false;
    for (const p of pts) {
      if (!num(p[k])) { pen = false; continue; }
      if (pen) ctx.lineTo(x(p[0]), y(p[k])); else ctx.moveTo(x(p[0]), y(p[k]));
      pen = true; drawn++;
    }
    ctx.stroke();
    ctx.restore();
    const m2 = 4;
    return { drawn, y: (v) => Math.min(Math.max(y(v), top + m2), top + height - m2) };
  }

  function valueAt(index, k) {
    let lo = 0, hi = S.pts.length - 1;
    while (lo < hi) { const mid = (lo + hi) >> 1; if (S.pts[mid][0] < index) lo = mid + 1; else hi = mid; }
    const p = S.pts[lo];
    return p && Math.abs(p[0] - index) <= 2 && num(p[k]) ? p[k] : null;
  }

  function draw() {
    const c = $('wave');
    const dpr = window.devicePixelRatio || 1;
    const w = c.clientWidth, h = c.clientHeight;
    if (c.width !== Math.round(w * dpr) || c.height !== Math.round(h * dpr)) {
      c.width = Math.round(w * dpr); c.height = Math.round(h * dpr);
    }
    const ctx = c.getContext('2d');
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.clearRect(0, 0, w, h);
    ctx.font = '12px system-ui, sans-serif';
    const axis = 20, x0 = 8, width = w - 16, laneH = (h - axis) / 2;
    let drawnIn = 0, drawnBp = 0, marks = 0;
    if (S.pts.length && S.rate) {
      const span = WINDOW_S * S.rate;
      const newest = S.pts[S.pts.length - 1][0], left = newest - span;
      ctx.strokeStyle = colour('--rule'); ctx.fillStyle = colour('--muted'); ctx.lineWidth = 1;
      ctx.setLineDash([2, 4]);
      for (let s = Math.ceil(left / S.rate); s <= Math.floor(newest / S.rate); s++) {
        const x = x0 + (s * S.rate - left) / span * width;
        ctx.beginPath(); ctx.moveTo(x, 0); ctx.lineTo(x, h - axis); ctx.stroke();
        ctx.fillText(s + ' s', x + 3, h - 6);
      }
      ctx.setLineDash([]);
      ctx.beginPath(); ctx.moveTo(x0, laneH); ctx.lineTo(x0 + width, laneH); ctx.stroke();
      const a = lane(ctx, S.pts, 1, 0, laneH, left, span, x0, width, colour('--input'));
      const b = lane(ctx, S.pts, 2, laneH, laneH, left, span, x0, width, colour('--bandpass'));
      drawnIn = a.drawn; drawnBp = b.drawn;
      for (const beat of S.beats) {
        if (beat.peak === null || beat.peak <= left || beat.peak > newest) continue;
        const x = x0 + (beat.peak - left) / span * width;
        const good = beat.verdict === 'good';
        ctx.strokeStyle = colour('--beat'); ctx.fillStyle = colour('--beat');
        ctx.lineWidth = 1.5;
        for (const [k, f] of [[1, a.y], [2, b.y]]) {
          const v = valueAt(beat.peak, k);
          if (v === null) continue;
          ctx.beginPath(); ctx.arc(x, f(v), 4, 0, 2 * Math.PI);
          if (good) ctx.fill(); else ctx.stroke();
        }
        marks++;
      }
      for (const [label, y] of [['input', 4], ['band-passed', laneH + 4]]) {
        ctx.fillStyle = colour('--card');
        ctx.fillRect(x0, y, ctx.measureText(label).width + 8, 15);
        ctx.fillStyle = colour('--muted');
        ctx.fillText(label, x0 + 4, y + 11);
      }
    } else {
      ctx.fillStyle = colour('--muted');
      ctx.fillText('waiting for samples from the board…', x0 + 4, h / 2);
    }
    c.dataset.points = String(drawnIn);
    c.dataset.filteredPoints = String(drawnBp);
    c.dataset.beats = String(marks);
  }

  $('pause').addEventListener('click', () => {
    S.paused = !S.paused;
    const b = $('pause');
    b.setAttribute('aria-pressed', String(S.paused));
    b.textContent = S.paused ? 'resume drawing' : 'pause drawing';
    $('paused-note').hidden = !S.paused;
    if (!S.paused) draw();
  });
  window.addEventListener('resize', () => { if (!S.paused) draw(); });

  // EventSource reconnects by itself when listen restarts; the first
  // message of every connection is a snapshot.
  const source = new EventSource('/events');
  source.onmessage = (e) => {
    let m;
    try { m = JSON.parse(e.data); } catch (_) { return; }
    apply(m);
  };
  source.onopen = () => $('stream').classList.remove('lost', 'quiet');
  source.onerror = () => {
    const el = $('stream');
    el.classList.add('lost');
    text(el, 'listen not reachable, trying again…');
  };
  draw();
})();
