// Measures a page for plethwire-checks' browser test and appends the
// result, percent-encoded JSON, in a pre element of its own: every
// figure's box, its text boxes, legend frames and curves (in page
// pixels), the HTML legends, and the text of elements a reader sees.
(function () {
  const frame = "#c8c8c8";
  const box = (r) => [r.left, r.top, r.right, r.bottom];
  const figures = [];
  for (const svg of document.querySelectorAll("svg")) {
    if (svg.classList.contains("swatch") || svg.parentElement.closest("svg")) continue;
    const texts = [];
    for (const t of svg.querySelectorAll("text")) {
      texts.push({ text: t.textContent.trim(), box: box(t.getBoundingClientRect()) });
    }
    const frames = [];
    for (const r of svg.querySelectorAll("rect")) {
      if ((r.getAttribute("stroke") || "").toLowerCase() === frame) {
        frames.push(box(r.getBoundingClientRect()));
      }
    }
    const curves = [];
    for (const p of svg.querySelectorAll("polyline")) {
      if (p.points.numberOfItems < 3) continue;
      const m = p.getScreenCTM();
      const pts = [];
      for (let i = 0; i < p.points.numberOfItems; i++) {
        const q = p.points.getItem(i).matrixTransform(m);
        pts.push([q.x, q.y]);
      }
      curves.push(pts);
    }
    figures.push({ box: box(svg.getBoundingClientRect()), texts, frames, curves });
  }
  const legends = [];
  for (const ul of document.querySelectorAll("ul.legend")) {
    legends.push(box(ul.getBoundingClientRect()));
  }
  const prose = [];
  for (const e of document.querySelectorAll("p, li, dd, dt, td, th, h1, h2, a")) {
    prose.push(e.textContent);
  }
  const out = document.createElement("pre");
  out.id = "plethwire-measure";
  out.textContent = encodeURIComponent(JSON.stringify({ figures, legends, prose }));
  document.body.appendChild(out);
})();
