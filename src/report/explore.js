// Explorable figures of the skyclock report (written for this report; no library).
// Each figure whose SVG carries its data (<metadata class="skyclock-figure-data">) is
// redrawn from that data: wheel to zoom (Shift: x only), drag to pan, point at or tap a
// mark to read its values, legend buttons to show or hide a series, Reset (or a double
// click) for the whole figure. The static SVG stays in the page for printing and for
// readers without scripts. After loading, <body> records how many figures drew
// (data-figures-rendered) and how many became explorable (data-figures-explorable).
(function () {
  'use strict';
  var PAD = { left: 84, right: 18, top: 44, gap: 58 };

  function finite(v) { return typeof v === 'number' && isFinite(v); }

  function range(values) {
    var lo = Infinity, hi = -Infinity;
    for (var i = 0; i < values.length; i++) {
      var v = values[i];
      if (finite(v)) { if (v < lo) { lo = v; } if (v > hi) { hi = v; } }
    }
    if (!finite(lo)) { return [0, 1]; }
    var pad = hi > lo ? 0.05 * (hi - lo) : 0.5;
    return [lo - pad, hi + pad];
  }

  // The data ranges of a panel, as the static figure computes them.
  function panelRanges(panel) {
    var xs = [], ys = [];
    panel.layers.forEach(function (l) {
      xs = xs.concat(l.x);
      if (l.type === 'points') {
        l.y.forEach(function (y, i) {
          var e = l.err && finite(l.err[i]) ? l.err[i] : 0;
          if (finite(y)) { ys.push(y - e, y + e); }
        });
      } else if (l.type === 'line') { ys = ys.concat(l.y); }
      else if (l.type === 'band') { ys = ys.concat(l.lower, l.upper); }
    });
    return { x: range(xs), y: range(ys) };
  }

  function niceStep(span, count) {
    var raw = span / count, mag = Math.pow(10, Math.floor(Math.log10(raw))), f = raw / mag;
    return (f < 1.5 ? 1 : f < 3 ? 2 : f < 7 ? 5 : 10) * mag;
  }

  function ticks(lo, hi, count) {
    var step = niceStep(hi - lo, count), out = [];
    var decimals = Math.max(0, Math.min(12, -Math.floor(Math.log10(step) + 1e-9)));
    for (var v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) {
      out.push({ value: v, text: (Math.abs(v) < step * 1e-6 ? 0 : v).toFixed(decimals) });
    }
    return out;
  }

  function fmt(v) {
    if (!finite(v)) { return '—'; }
    var a = Math.abs(v);
    if (a !== 0 && (a < 1e-4 || a >= 1e9)) { return v.toExponential(6); }
    return String(Number(v.toPrecision(10)));
  }

  function Explorer(figure, svgStatic, data, ns, index) {
    this.figure = figure;
    this.data = data;
    this.ns = ns;
    this.index = index;
    this.hidden = {};
    this.width = data.width || 1000;
    var weights = data.panels.reduce(function (s, p) { return s + (p.weight || 1); }, 0) || 1;
    var plotHeight = Math.max(200, (data.height || 600) - PAD.top - PAD.gap * data.panels.length);
    var top = PAD.top;
    this.panels = data.panels.map(function (p, k) {
      var h = plotHeight * (p.weight || 1) / weights, r = panelRanges(p);
      var panel = { data: p, index: k, top: top, height: h, home: { x: r.x.slice(), y: r.y.slice() }, x: r.x.slice(), y: r.y.slice() };
      top += h + PAD.gap;
      return panel;
    });
    this.height = top;
    this.build(svgStatic);
    this.draw();
    this.bind();
  }

  Explorer.prototype.el = function (name, attrs, parent) {
    var e = document.createElementNS(this.ns, name);
    for (var k in attrs) { if (Object.prototype.hasOwnProperty.call(attrs, k)) { e.setAttribute(k, attrs[k]); } }
    if (parent) { parent.appendChild(e); }
    return e;
  };

  Explorer.prototype.build = function (svgStatic) {
    var self = this, view = document.createElement('div');
    view.className = 'sc-view';
    var bar = document.createElement('div');
    bar.className = 'sc-toolbar';
    var groups = [];
    this.data.panels.forEach(function (p) {
      p.layers.forEach(function (l) {
        if (l.label && groups.every(function (g) { return g.name !== l.group; })) { groups.push({ name: l.group, colour: l.colour }); }
      });
    });
    this.buttons = groups.map(function (g) {
      var b = document.createElement('button');
      b.type = 'button';
      b.className = 'sc-legend';
      b.setAttribute('aria-pressed', 'true');
      b.setAttribute('data-group', g.name);
      var swatch = document.createElement('span');
      swatch.className = 'sc-swatch';
      swatch.style.background = g.colour;
      b.appendChild(swatch);
      b.appendChild(document.createTextNode(g.name));
      b.addEventListener('click', function () { self.toggle(g.name); });
      bar.appendChild(b);
      return b;
    });
    var reset = document.createElement('button');
    reset.type = 'button';
    reset.className = 'sc-reset';
    reset.textContent = 'Reset';
    reset.addEventListener('click', function () { self.reset(); });
    bar.appendChild(reset);
    var hint = document.createElement('span');
    hint.className = 'sc-hint';
    hint.textContent = 'wheel: zoom (Shift: x only) · drag: pan · point at or tap a mark for its values · double click: reset';
    bar.appendChild(hint);
    view.appendChild(bar);
    var holder = document.createElement('div');
    holder.className = 'sc-holder';
    this.svg = this.el('svg', { viewBox: '0 0 ' + this.width + ' ' + this.height, 'class': 'sc-plot', role: 'img', 'aria-label': this.data.title }, holder);
    this.tip = document.createElement('div');
    this.tip.className = 'sc-tip';
    this.tip.hidden = true;
    holder.appendChild(this.tip);
    view.appendChild(holder);
    svgStatic.parentNode.insertBefore(view, svgStatic.nextSibling);
    this.view = view;
  };

  Explorer.prototype.px = function (p, x) { return PAD.left + (x - p.x[0]) / (p.x[1] - p.x[0]) * (this.width - PAD.left - PAD.right); };
  Explorer.prototype.py = function (p, y) {
    var f = (y - p.y[0]) / (p.y[1] - p.y[0]);
    return p.data.invert_y ? p.top + f * p.height : p.top + (1 - f) * p.height;
  };

  Explorer.prototype.draw = function () {
    var self = this, svg = this.svg;
    while (svg.firstChild) { svg.removeChild(svg.firstChild); }
    this.el('rect', { x: 0, y: 0, width: this.width, height: this.height, fill: '#fff' }, svg);
    var title = this.el('text', { x: this.width / 2, y: 26, 'text-anchor': 'middle', 'class': 'sc-title' }, svg);
    title.textContent = this.data.title;
    this.panels.forEach(function (p) { self.drawPanel(p); });
    this.marker = this.el('circle', { r: 7, fill: 'none', stroke: '#000', 'stroke-width': 2, 'class': 'sc-marker', visibility: 'hidden' }, svg);
  };

  Explorer.prototype.drawPanel = function (p) {
    var self = this, w = this.width - PAD.left - PAD.right, left = PAD.left;
    var g = this.el('g', { 'class': 'sc-panel', 'data-panel': p.index, 'data-x-min': p.x[0], 'data-x-max': p.x[1], 'data-y-min': p.y[0], 'data-y-max': p.y[1] }, this.svg);
    ticks(p.x[0], p.x[1], 8).forEach(function (t) {
      var x = self.px(p, t.value);
      self.el('line', { x1: x, x2: x, y1: p.top, y2: p.top + p.height, stroke: '#ebebeb' }, g);
      var label = self.el('text', { x: x, y: p.top + p.height + 17, 'text-anchor': 'middle', 'class': 'sc-tick' }, g);
      label.textContent = t.text;
    });
    ticks(p.y[0], p.y[1], 6).forEach(function (t) {
      var y = self.py(p, t.value);
      self.el('line', { x1: left, x2: left + w, y1: y, y2: y, stroke: '#ebebeb' }, g);
      var label = self.el('text', { x: left - 6, y: y + 4, 'text-anchor': 'end', 'class': 'sc-tick sc-tick-y' }, g);
      label.textContent = t.text;
    });
    this.el('rect', { x: left, y: p.top, width: w, height: p.height, fill: 'none', stroke: '#333', 'class': 'sc-frame' }, g);
    var xl = this.el('text', { x: left + w / 2, y: p.top + p.height + 38, 'text-anchor': 'middle', 'class': 'sc-axis' }, g);
    xl.textContent = p.data.x_label;
    var yl = this.el('text', { x: 0, y: 0, 'text-anchor': 'middle', 'class': 'sc-axis', transform: 'translate(18 ' + (p.top + p.height / 2) + ') rotate(-90)' }, g);
    yl.textContent = p.data.y_label;
    // A nested svg element clips the series to the plot area.
    var clip = this.el('svg', { x: left, y: p.top, width: w, height: p.height, viewBox: left + ' ' + p.top + ' ' + w + ' ' + p.height, overflow: 'hidden' }, g);
    p.data.layers.forEach(function (l, k) {
      var lg = self.el('g', { 'class': 'sc-layer', 'data-layer': k, 'data-group': l.group }, clip);
      if (self.hidden[l.group]) { lg.setAttribute('display', 'none'); }
      self.drawLayer(p, l, lg);
    });
  };

  Explorer.prototype.drawLayer = function (p, l, g) {
    var d = [], i, x, y;
    if (l.type === 'band') {
      var top = [], bottom = [];
      for (i = 0; i < l.x.length; i++) {
        if (finite(l.x[i]) && finite(l.lower[i]) && finite(l.upper[i])) {
          top.push(this.px(p, l.x[i]).toFixed(1) + ',' + this.py(p, l.upper[i]).toFixed(1));
          bottom.unshift(this.px(p, l.x[i]).toFixed(1) + ',' + this.py(p, l.lower[i]).toFixed(1));
        }
      }
      if (top.length) { this.el('path', { d: 'M' + top.concat(bottom).join('L') + 'Z', fill: l.colour, 'fill-opacity': 0.25 }, g); }
    } else if (l.type === 'line') {
      var pen = 'M';
      for (i = 0; i < l.x.length; i++) {
        if (finite(l.x[i]) && finite(l.y[i])) { d.push(pen + this.px(p, l.x[i]).toFixed(1) + ',' + this.py(p, l.y[i]).toFixed(1)); pen = 'L'; } else { pen = 'M'; }
      }
      if (d.length) { this.el('path', { d: d.join(''), fill: 'none', stroke: l.colour, 'stroke-width': 2 }, g); }
    } else if (l.type === 'points') {
      var bars = [], r = Math.max(1.5, l.size || 2), drawn = 0;
      var x0 = Math.min(p.x[0], p.x[1]), x1 = Math.max(p.x[0], p.x[1]);
      for (i = 0; i < l.x.length; i++) {
        if (!(finite(l.x[i]) && finite(l.y[i])) || l.x[i] < x0 || l.x[i] > x1) { continue; }
        x = this.px(p, l.x[i]); y = this.py(p, l.y[i]);
        if (l.err && finite(l.err[i])) {
          bars.push('M' + x.toFixed(1) + ',' + this.py(p, l.y[i] - l.err[i]).toFixed(1) + 'V' + this.py(p, l.y[i] + l.err[i]).toFixed(1));
        }
        d.push('M' + (x - r).toFixed(1) + ',' + y.toFixed(1) + 'a' + r + ',' + r + ' 0 1,0 ' + 2 * r + ',0a' + r + ',' + r + ' 0 1,0 ' + -2 * r + ',0');
        drawn++;
      }
      if (bars.length) { this.el('path', { d: bars.join(''), stroke: l.colour, 'stroke-opacity': 0.6, fill: 'none' }, g); }
      if (d.length) { this.el('path', { d: d.join(''), fill: l.colour, 'class': 'sc-points' }, g); }
      g.setAttribute('data-drawn', drawn);
    } else if (l.type === 'markers' || l.type === 'guides') {
      var guide = l.type === 'guides';
      for (i = 0; i < l.x.length; i++) {
        if (!finite(l.x[i])) { continue; }
        x = this.px(p, l.x[i]);
        var line = this.el('line', { x1: x, x2: x, y1: p.top, y2: p.top + p.height, stroke: l.colour, 'stroke-width': guide ? 1 : 1.2 }, g);
        if (guide) { line.setAttribute('stroke-dasharray', '6 4'); }
        var t = this.el('text', { x: x + 3, y: p.top + (guide ? 0.2 : 0.06) * p.height, fill: l.colour, 'class': 'sc-mark' }, g);
        t.textContent = l.text[i] || '';
      }
    }
  };

  // The nearest visible mark to an SVG-unit position inside panel p, within a few pixels.
  Explorer.prototype.nearest = function (p, sx, sy) {
    var best = null, bestD = 14 * 14, self = this;
    p.data.layers.forEach(function (l, k) {
      if (self.hidden[l.group] || l.type === 'band') { return; }
      for (var i = 0; i < l.x.length; i++) {
        if (!finite(l.x[i])) { continue; }
        var dx = self.px(p, l.x[i]) - sx, dd;
        if (l.type === 'markers' || l.type === 'guides') { dd = dx * dx * 4; }
        else if (finite(l.y[i])) { var dy = self.py(p, l.y[i]) - sy; dd = dx * dx + dy * dy; }
        else { continue; }
        if (dd < bestD || (dd === bestD && best && best.layer.type !== 'points' && l.type === 'points')) { bestD = dd; best = { layer: l, layerIndex: k, point: i }; }
      }
    });
    return best;
  };

  Explorer.prototype.show = function (p, hit) {
    if (!hit) { this.tip.hidden = true; this.marker.setAttribute('visibility', 'hidden'); return; }
    var l = hit.layer, i = hit.point, rows = [], tip = this.tip;
    if (l.details && l.details.rows[i]) {
      l.details.names.forEach(function (n, k) { rows.push([n, l.details.rows[i][k]]); });
    } else if (l.type === 'markers' || l.type === 'guides') {
      rows.push(['mark', l.text[i] || '']);
      rows.push([p.data.x_label, fmt(l.x[i])]);
    } else {
      rows.push([p.data.x_label, fmt(l.x[i])]);
      var y = fmt(l.y[i]);
      if (l.err && finite(l.err[i])) { y += ' ± ' + fmt(l.err[i]); }
      rows.push([p.data.y_label, y]);
    }
    while (tip.firstChild) { tip.removeChild(tip.firstChild); }
    var head = document.createElement('div');
    head.className = 'sc-tip-head';
    head.textContent = l.group || l.label || '';
    tip.appendChild(head);
    var table = document.createElement('table');
    rows.forEach(function (r) {
      var tr = document.createElement('tr'), th = document.createElement('th'), td = document.createElement('td');
      th.textContent = r[0];
      td.textContent = r[1];
      tr.appendChild(th);
      tr.appendChild(td);
      table.appendChild(tr);
    });
    tip.appendChild(table);
    tip.setAttribute('data-panel', p.index);
    tip.setAttribute('data-layer', hit.layerIndex);
    tip.setAttribute('data-point', i);
    var sx = this.px(p, l.x[i]), sy = l.type === 'points' || l.type === 'line' ? this.py(p, l.y[i]) : p.top + 10;
    this.marker.setAttribute('cx', sx);
    this.marker.setAttribute('cy', sy);
    this.marker.setAttribute('visibility', 'visible');
    var box = this.svg.getBoundingClientRect(), scale = box.width / this.width;
    tip.hidden = false;
    var left = sx * scale + 14, topPx = sy * scale + 14;
    if (left + tip.offsetWidth > box.width) { left = Math.max(0, sx * scale - 14 - tip.offsetWidth); }
    tip.style.left = left + 'px';
    tip.style.top = topPx + 'px';
  };

  // SVG units of a pointer event, and the panel under it (or null).
  Explorer.prototype.locate = function (ev) {
    var box = this.svg.getBoundingClientRect();
    var sx = (ev.clientX - box.left) * this.width / box.width, sy = (ev.clientY - box.top) * this.height / box.height;
    var panel = null;
    this.panels.forEach(function (p) { if (sy >= p.top && sy <= p.top + p.height && sx >= PAD.left) { panel = p; } });
    return { sx: sx, sy: sy, panel: panel };
  };

  // Panels sharing panel p's x axis (same x label) move together.
  Explorer.prototype.linked = function (p) {
    return this.panels.filter(function (q) { return q.data.x_label === p.data.x_label; });
  };

  Explorer.prototype.zoom = function (p, sx, sy, factor, xOnly) {
    var fx = PAD.left, w = this.width - PAD.left - PAD.right;
    var xAt = p.x[0] + (sx - fx) / w * (p.x[1] - p.x[0]);
    this.linked(p).forEach(function (q) { q.x = [xAt - (xAt - q.x[0]) * factor, xAt + (q.x[1] - xAt) * factor]; });
    if (!xOnly) {
      var f = (sy - p.top) / p.height;
      if (!p.data.invert_y) { f = 1 - f; }
      var yAt = p.y[0] + f * (p.y[1] - p.y[0]);
      p.y = [yAt - (yAt - p.y[0]) * factor, yAt + (p.y[1] - yAt) * factor];
    }
    this.draw();
  };

  Explorer.prototype.pan = function (p, dsx, dsy) {
    var w = this.width - PAD.left - PAD.right;
    var dx = -dsx / w * (p.x[1] - p.x[0]);
    this.linked(p).forEach(function (q) { q.x = [q.x[0] + dx, q.x[1] + dx]; });
    var dy = dsy / p.height * (p.y[1] - p.y[0]) * (p.data.invert_y ? -1 : 1);
    p.y = [p.y[0] + dy, p.y[1] + dy];
    this.draw();
  };

  Explorer.prototype.reset = function () {
    this.panels.forEach(function (p) { p.x = p.home.x.slice(); p.y = p.home.y.slice(); });
    this.draw();
    this.show(null, null);
  };

  Explorer.prototype.toggle = function (group) {
    this.hidden[group] = !this.hidden[group];
    this.buttons.forEach(function (b) { if (b.getAttribute('data-group') === group) { b.setAttribute('aria-pressed', String(!this.hidden[group])); } }, this);
    this.draw();
    this.show(null, null);
  };

  Explorer.prototype.bind = function () {
    var self = this, svg = this.svg, drag = null;
    svg.addEventListener('wheel', function (ev) {
      var at = self.locate(ev);
      if (!at.panel) { return; }
      ev.preventDefault();
      self.zoom(at.panel, at.sx, at.sy, Math.exp(Math.max(-5, Math.min(5, ev.deltaY * 0.0015))), ev.shiftKey);
    }, { passive: false });
    svg.addEventListener('pointerdown', function (ev) {
      var at = self.locate(ev);
      if (!at.panel) { return; }
      drag = { panel: at.panel, sx: at.sx, sy: at.sy, moved: 0 };
      if (svg.setPointerCapture && ev.pointerId !== undefined) { try { svg.setPointerCapture(ev.pointerId); } catch (e) { void e; } }
    });
    svg.addEventListener('pointermove', function (ev) {
      var at = self.locate(ev);
      if (drag) {
        var dsx = at.sx - drag.sx, dsy = at.sy - drag.sy;
        drag.moved += Math.abs(dsx) + Math.abs(dsy);
        if (drag.moved > 3) { self.pan(drag.panel, dsx, dsy); drag.sx = at.sx; drag.sy = at.sy; }
        return;
      }
      self.show(at.panel, at.panel ? self.nearest(at.panel, at.sx, at.sy) : null);
    });
    svg.addEventListener('pointerup', function (ev) {
      var at = self.locate(ev);
      // A tap (press and release without moving) shows the values of the nearest mark.
      if (drag && drag.moved <= 3 && at.panel) { self.show(at.panel, self.nearest(at.panel, at.sx, at.sy)); }
      drag = null;
    });
    svg.addEventListener('pointerleave', function () { if (!drag) { self.show(null, null); } });
    svg.addEventListener('dblclick', function () { self.reset(); });
  };

  window.addEventListener('load', function () {
    var figures = document.querySelectorAll('figure.report-figure');
    var rendered = 0, explorable = 0;
    for (var i = 0; i < figures.length; i++) {
      var svg = figures[i].querySelector('svg');
      var ok = false;
      if (svg) {
        var box = svg.getBoundingClientRect(), drawn = svg.getBBox();
        ok = box.width > 0 && box.height > 0 && drawn.width > 0 && drawn.height > 0;
      }
      var meta = svg ? svg.querySelector('metadata.skyclock-figure-data') : null;
      if (ok && meta) {
        var data = null;
        try { data = JSON.parse(meta.textContent); } catch (e) { data = null; }
        if (data && data.version === 1 && data.panels && data.panels.length) {
          new Explorer(figures[i], svg, data, svg.namespaceURI, i);
          figures[i].classList.add('explorable');
          var view = figures[i].querySelector('svg.sc-plot').getBoundingClientRect();
          ok = view.width > 0 && view.height > 0;
          explorable += ok ? 1 : 0;
        }
      }
      if (ok) { rendered++; } else { figures[i].classList.add('not-rendered'); }
    }
    document.body.setAttribute('data-figures-rendered', String(rendered));
    document.body.setAttribute('data-figures-explorable', String(explorable));
  });
})();
