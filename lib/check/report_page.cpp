// The check report as one HTML page. Layout, colours and symbols are this project's own design. Each structure's
// data (coordinates in its principal-axes view, bonds, flagged atoms, findings, the SVG picture) sits in its own
// inert <script type="application/json"> block and is parsed only when the structure is opened, so a page of a
// thousand structures loads as fast as its table.
#include "check/report_page.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <nlohmann/json.hpp>
#include <set>

#include "core/element.hpp"
#include "output/formats.hpp"
#include "output/picture.hpp"

namespace repel {
namespace {

std::string escape_html(std::string_view text) { return output::escape_markup(text, "&#39;"); }

// JSON inside a <script> element: "</script", "<!--" or "<script" in a string could end the element early or change
// how it is parsed, so every '<' (only ever inside a JSON string) is written as the escape \u003c.
std::string script_json(const nlohmann::json& j) {
    const std::string text = j.dump(-1, ' ', false, nlohmann::json::error_handler_t::replace);
    std::string out;
    out.reserve(text.size() + text.size() / 8);
    for (char c : text) {
        if (c == '<') out += "\\u003c";
        else out += c;
    }
    return out;
}

// The table shows a file by its name (the whole path in its tooltip and in the structure's details).
std::string base_name(const std::string& path) {
    const size_t slash = path.find_last_of('/');
    return slash == std::string::npos || slash + 1 == path.size() ? path : path.substr(slash + 1);
}

// Structures larger than this get the 3D view only in the page (a 10,000-atom picture is 3.4 MB of SVG; the page of
// a structure file with a million atoms would otherwise carry a third of a gigabyte of it). Own choice.
constexpr int kMaxPictureAtoms = 20000;

double round_to(double v, double step) { return std::round(v / step) * step; }

// Verdict order for sorting: clean, warnings, errors, not audited.
struct Verdict {
    const char* name;
    const char* css;
    int rank;
};
constexpr Verdict kClean{"clean", "clean", 0}, kWarnings{"warnings", "warning", 1}, kErrors{"errors", "error", 2},
    kNotAudited{"not audited", "failed", 3};

constexpr const char* kStyle = R"CSS(
:root { --paper:#fbfaf7; --ink:#2b2b2b; --rule:#d9d4c7; --clean:#3c8d5a; --warning:#c98a12; --error:#b83a2e;
        --failed:#6d6d6d; --marker:#e0218a; --accent:#35558a; }
* { box-sizing: border-box; }
body { margin:0; background:var(--paper); color:var(--ink); font:14px/1.45 sans-serif; }
header { padding:14px 20px 6px; border-bottom:2px solid var(--rule); }
h1 { font-size:20px; margin:0 0 4px; font-weight:600; }
h2 { font-size:16px; margin:0 0 8px; }
.legend { display:flex; flex-wrap:wrap; gap:6px 18px; padding:8px 20px; border-bottom:1px solid var(--rule); font-size:13px; }
.legend span { display:inline-flex; align-items:center; gap:6px; }
.layout { display:grid; grid-template-columns:minmax(420px, 1fr) minmax(420px, 1.1fr); gap:16px; padding:12px 20px; }
@media (max-width:1000px) { .layout { grid-template-columns:1fr; } }
.controls { display:flex; gap:12px; align-items:center; margin-bottom:8px; }
.controls input { font:inherit; padding:4px 8px; width:22em; border:1px solid var(--rule); border-radius:4px; background:#fff; }
.tablebox { max-height:82vh; overflow:auto; border:1px solid var(--rule); border-radius:4px; background:#fff; }
table { border-collapse:collapse; width:100%; }
th, td { padding:4px 8px; text-align:left; border-bottom:1px solid #eee9de; vertical-align:top; }
th { position:sticky; top:0; background:#f1ede3; cursor:pointer; user-select:none; white-space:nowrap; }
th[aria-sort=ascending]::after { content:" \25B2"; font-size:10px; }
th[aria-sort=descending]::after { content:" \25BC"; font-size:10px; }
td.worst { max-width:24em; white-space:nowrap; overflow:hidden; text-overflow:ellipsis; }
td.num { text-align:right; font-variant-numeric:tabular-nums; }
tbody tr { cursor:pointer; }
tbody tr:hover { background:#f6f2e8; }
tbody tr.open { background:#e9eef7; }
.badge { display:inline-block; padding:0 7px; border-radius:9px; color:#fff; font-size:12px; white-space:nowrap; }
.badge.clean { background:var(--clean); } .badge.warning { background:var(--warning); }
.badge.error { background:var(--error); } .badge.failed { background:var(--failed); }
#detail { position:sticky; top:8px; align-self:start; }
#detail .empty { color:#777; }
.pair { display:flex; flex-wrap:wrap; gap:12px; }
#picture svg { max-width:100%; height:auto; border:1px solid var(--rule); border-radius:4px; }
#picture { flex:1 1 340px; min-width:300px; }
#findings { flex:1 1 220px; }
#findings ol { padding-left:20px; margin:4px 0; }
#findings li { margin-bottom:6px; }
.atoms { color:var(--marker); font-weight:600; }
.viewer { margin-top:12px; }
canvas { display:block; width:100%; max-width:640px; height:400px; border:1px solid var(--rule); border-radius:4px;
         background:var(--paper); touch-action:none; cursor:grab; }
.hint { font-size:12px; color:#666; margin:4px 0 0; }
.ring { display:inline-block; width:14px; height:14px; border:2.5px dashed var(--marker); border-radius:50%; }
.ball { display:inline-block; width:14px; height:14px; border-radius:50%;
        background:radial-gradient(circle at 33% 30%, #dfe3e6, #56606a 55%, #2c3237); }
.far { opacity:.45; transform:scale(.8); }
)CSS";

// The page's script (own code): sorting, filtering, opening a structure (its JSON parsed then), the canvas view.
// window.repelView holds what the last frame drew (projected positions of the flagged atoms in CSS pixels of the
// canvas, with the radius of their rings), for the browser test and for anyone scripting the page.
constexpr const char* kScript = R"JS(
(function () {
  'use strict';
  const palette = JSON.parse(document.getElementById('palette').textContent);
  const MARKER = '#e0218a', PAPER = '#fbfaf7';
  const table = document.getElementById('summary');
  const tbody = table.tBodies[0];
  const filter = document.getElementById('filter');
  const shown = document.getElementById('shown');
  const allRows = Array.from(tbody.rows);

  // Sorting: numbers by their data-v, text by its content; a second click reverses.
  Array.from(table.tHead.rows[0].cells).forEach(function (th, col) {
    th.addEventListener('click', function () {
      const ascending = th.getAttribute('aria-sort') !== 'ascending';
      Array.from(table.tHead.rows[0].cells).forEach(function (h) { h.removeAttribute('aria-sort'); });
      th.setAttribute('aria-sort', ascending ? 'ascending' : 'descending');
      const numeric = th.dataset.type === 'num';
      const key = function (row) {
        const cell = row.cells[col];
        return numeric ? parseFloat(cell.dataset.v) : cell.textContent.toLowerCase();
      };
      const rows = Array.from(tbody.rows);
      rows.sort(function (a, b) {
        const ka = key(a), kb = key(b);
        const c = ka < kb ? -1 : ka > kb ? 1 : (+a.dataset.k) - (+b.dataset.k);
        return ascending ? c : -c;
      });
      const frag = document.createDocumentFragment();
      rows.forEach(function (r) { frag.appendChild(r); });
      tbody.appendChild(frag);
    });
  });

  function applyFilter() {
    const words = filter.value.toLowerCase().split(/\s+/).filter(Boolean);
    let n = 0;
    allRows.forEach(function (row) {
      const text = row.textContent.toLowerCase();
      const ok = words.every(function (w) { return text.indexOf(w) >= 0; });
      row.hidden = !ok;
      if (ok) ++n;
    });
    shown.textContent = n + ' of ' + allRows.length + ' shown';
  }
  filter.addEventListener('input', applyFilter);
  applyFilter();

  // The detail panel: one structure at a time.
  const canvas = document.getElementById('view');
  const ctx = canvas.getContext('2d');
  let view = null;

  function esc(s) {
    return String(s).replace(/[&<>"']/g, function (c) {
      return {'&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;'}[c];
    });
  }

  function open(k) {
    const block = document.getElementById('s' + k);
    if (!block) return;
    const s = JSON.parse(block.textContent);
    allRows.forEach(function (r) { r.classList.toggle('open', r.dataset.k === String(k)); });
    document.getElementById('detail-empty').hidden = true;
    document.getElementById('detail-body').hidden = false;
    document.getElementById('detail-title').textContent = '#' + k + ' ' + s.t;
    document.getElementById('picture').innerHTML = s.svg || '<p class="empty">no picture</p>';
    let html = '<p>' + esc(s.info) + '</p>';
    if (s.fi.length) {
      html += '<ol>' + s.fi.map(function (f) {
        return '<li><span class="badge ' + f.s + '">' + f.s + '</span> <b>' + esc(f.k) + '</b> ' +
          (f.a.length ? '<span class="atoms">atoms ' + f.a.join(', ') + '</span> ' : '') + esc(f.m) + '</li>';
      }).join('') + '</ol>';
    } else if (!s.error) {
      html += '<p>No findings.</p>';
    }
    if (s.error) html += '<p><span class="badge failed">not audited</span> ' + esc(s.error) + '</p>';
    if (s.notes && s.notes.length)
      html += '<p>Notes:</p><ul>' + s.notes.map(function (n) { return '<li>' + esc(n) + '</li>'; }).join('') + '</ul>';
    document.getElementById('findings').innerHTML = html;
    const n = s.el.length;
    let reach = 1;
    for (let i = 0; i < n; ++i)
      reach = Math.max(reach, Math.hypot(s.x[3 * i], s.x[3 * i + 1], s.x[3 * i + 2]) + 1);
    view = {k: k, s: s, rot: [1, 0, 0, 0, 1, 0, 0, 0, 1], zoom: 1, reach: reach, flagged: new Set(s.m)};
    draw();
  }

  function mul(a, b) {
    const r = new Array(9);
    for (let i = 0; i < 3; ++i)
      for (let j = 0; j < 3; ++j)
        r[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
    return r;
  }
  function turn(dx, dy) {
    const a = dx * 0.01, b = dy * 0.01;
    const ry = [Math.cos(a), 0, Math.sin(a), 0, 1, 0, -Math.sin(a), 0, Math.cos(a)];
    const rx = [1, 0, 0, 0, Math.cos(b), -Math.sin(b), 0, Math.sin(b), Math.cos(b)];
    view.rot = mul(ry, mul(rx, view.rot));
  }

  // Depth cueing in five slices, as in the SVG picture: colours mixed toward the paper, cached per colour and slice
  // (a 10,000-atom frame would otherwise spend its time formatting colour strings).
  const LEVELS = 5, shadeCache = new Map();
  function shade(hex, t) {  // mix toward the paper: t = 0 keeps the colour
    const level = Math.round(t / 0.55 * (LEVELS - 1));
    const key = hex + level;
    let out = shadeCache.get(key);
    if (out === undefined) {
      const f = 0.55 * level / (LEVELS - 1);
      const c = parseInt(hex.slice(1), 16), p = parseInt(PAPER.slice(1), 16);
      const ch = function (s) {
        return Math.round(((c >> s) & 255) * (1 - f) + ((p >> s) & 255) * f);
      };
      out = 'rgb(' + ch(16) + ',' + ch(8) + ',' + ch(0) + ')';
      shadeCache.set(key, out);
    }
    return out;
  }

  // A shaded ball per element and depth slice, drawn once on a small canvas and then stamped (scaled) for every atom:
  // far cheaper than a gradient per atom in a frame of 10,000 atoms.
  const SPRITE = 96, balls = new Map();
  function ball(symbol, fog) {
    const key = symbol + shade('#000000', fog);
    let c = balls.get(key);
    if (c === undefined) {
      const p = palette[symbol], h = SPRITE / 2;
      c = document.createElement('canvas');
      c.width = c.height = SPRITE;
      const g2 = c.getContext('2d');
      const g = g2.createRadialGradient(h - 0.34 * h, h - 0.4 * h, 0.05 * h, h, h, h);
      g.addColorStop(0, shade('#ffffff', fog * 0.6));
      g.addColorStop(0.5, shade(p[0], fog));
      g.addColorStop(1, shade(p[2], fog));
      g2.fillStyle = g;
      g2.beginPath();
      g2.arc(h, h, h, 0, 2 * Math.PI);
      g2.fill();
      balls.set(key, c);
    }
    return c;
  }

  let pending = false;
  function request() {
    if (!pending) { pending = true; requestAnimationFrame(function () { pending = false; draw(); }); }
  }

  function draw() {
    if (!view) return;
    const dpr = window.devicePixelRatio || 1;
    const w = canvas.clientWidth, h = canvas.clientHeight;
    if (canvas.width !== Math.round(w * dpr) || canvas.height !== Math.round(h * dpr)) {
      canvas.width = Math.round(w * dpr);
      canvas.height = Math.round(h * dpr);
    }
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = PAPER;
    ctx.fillRect(0, 0, w, h);
    const s = view.s, n = s.el.length, R = view.rot;
    const scale = 0.47 * Math.min(w, h) / view.reach * view.zoom;
    const px = new Float64Array(n), py = new Float64Array(n), pz = new Float64Array(n);
    let zmin = Infinity, zmax = -Infinity;
    for (let i = 0; i < n; ++i) {
      const x = s.x[3 * i], y = s.x[3 * i + 1], z = s.x[3 * i + 2];
      px[i] = w / 2 + (R[0] * x + R[1] * y + R[2] * z) * scale;
      py[i] = h / 2 - (R[3] * x + R[4] * y + R[5] * z) * scale;
      pz[i] = R[6] * x + R[7] * y + R[8] * z;
      zmin = Math.min(zmin, pz[i]); zmax = Math.max(zmax, pz[i]);
    }
    const near = function (z) { return zmax - zmin < 1e-6 ? 1 : (z - zmin) / (zmax - zmin); };
    // Painter's order, far to near, as in the SVG picture: a bond at the depth of its farther atom, before a ball at
    // the same depth. Past BIG atoms the sticks are drawn first, gathered into one path per colour (one stroke each
    // instead of one per stick), and only the balls are depth-sorted: a frame of 10,000 atoms stays quick.
    const BIG = 2000, big = n > BIG;
    const items = [];
    for (let i = 0; i < n; ++i) items.push([pz[i], 1, i]);
    if (big) {
      const paths = new Map();
      const add = function (colour, x1, y1, x2, y2) {
        let path = paths.get(colour);
        if (!path) { path = new Path2D(); paths.set(colour, path); }
        path.moveTo(x1, y1);
        path.lineTo(x2, y2);
      };
      for (let b = 0; b < s.b.length; b += 4) {
        const a = s.b[b], c = s.b[b + 1], fog = 0.55 * (1 - near(Math.min(pz[a], pz[c])));
        const sticks = s.b[b + 3] ? 2 : Math.min(Math.max(s.b[b + 2], 1), 3);
        let dx = px[c] - px[a], dy = py[c] - py[a];
        const len = Math.hypot(dx, dy) || 1;
        dx /= len; dy /= len;
        const mx = (px[a] + px[c]) / 2, my = (py[a] + py[c]) / 2;
        for (let k = 0; k < sticks; ++k) {
          const off = (k - (sticks - 1) / 2) * 0.17 * scale;
          add(shade(palette[s.el[a]][0], fog), px[a] - dy * off, py[a] + dx * off, mx - dy * off, my + dx * off);
          add(shade(palette[s.el[c]][0], fog), mx - dy * off, my + dx * off, px[c] - dy * off, py[c] + dx * off);
        }
      }
      ctx.lineWidth = Math.max(1, 0.12 * scale);
      ctx.lineCap = 'round';
      paths.forEach(function (path, colour) { ctx.strokeStyle = colour; ctx.stroke(path); });
    } else {
      for (let b = 0; b < s.b.length; b += 4) items.push([Math.min(pz[s.b[b]], pz[s.b[b + 1]]), 0, b]);
    }
    items.sort(function (a, b) { return a[0] - b[0] || a[1] - b[1]; });
    const radius = new Float64Array(n);
    for (const it of items) {
      const t = near(it[0]), fog = 0.55 * (1 - t), f = 1 - 0.2 * (1 - t);
      if (it[1] === 0) {
        const a = s.b[it[2]], b = s.b[it[2] + 1], order = s.b[it[2] + 2], arom = s.b[it[2] + 3];
        let dx = px[b] - px[a], dy = py[b] - py[a];
        const len = Math.hypot(dx, dy) || 1;
        dx /= len; dy /= len;
        const sticks = arom ? 2 : Math.min(Math.max(order, 1), 3);
        const mx = (px[a] + px[b]) / 2, my = (py[a] + py[b]) / 2;
        ctx.lineWidth = Math.max(1, 0.15 * scale * f * (sticks === 1 ? 1 : 0.72));
        ctx.lineCap = 'round';
        for (let k = 0; k < sticks; ++k) {
          const off = (k - (sticks - 1) / 2) * 0.17 * scale * f;
          ctx.setLineDash(arom && k === 1 ? [3, 3] : []);
          [[a, px[a], py[a], mx, my], [b, mx, my, px[b], py[b]]].forEach(function (h2) {
            ctx.strokeStyle = shade(palette[s.el[h2[0]]][0], fog);
            ctx.beginPath();
            ctx.moveTo(h2[1] - dy * off, h2[2] + dx * off);
            ctx.lineTo(h2[3] - dy * off, h2[4] + dx * off);
            ctx.stroke();
          });
        }
        ctx.setLineDash([]);
      } else {
        const i = it[2], p = palette[s.el[i]];
        const r = Math.max(1.5, p[1] * scale * f);
        radius[i] = r;
        ctx.drawImage(ball(s.el[i], fog), px[i] - r, py[i] - r, 2 * r, 2 * r);
      }
    }
    // Flagged atoms last, so that a ring is never hidden: a dashed ring in the marker colour and the atom's number.
    const flagged = [];
    ctx.lineWidth = 3;
    ctx.setLineDash([6, 4]);
    ctx.strokeStyle = MARKER;
    ctx.font = '600 12px sans-serif';
    for (const i of view.flagged) {
      if (i < 0 || i >= n) continue;
      const ring = radius[i] + 4;
      ctx.beginPath();
      ctx.arc(px[i], py[i], ring, 0, 2 * Math.PI);
      ctx.stroke();
      ctx.fillStyle = MARKER;
      ctx.fillText(s.el[i] + (i + 1), px[i] + ring + 2, py[i] - ring);
      flagged.push({atom: i + 1, x: px[i], y: py[i], ring: ring});
    }
    ctx.setLineDash([]);
    window.repelView = {structure: view.k, atoms: n, zoom: view.zoom, rotation: R.slice(), flagged: flagged};
    canvas.dataset.flagged = JSON.stringify(flagged);
  }

  let drag = null;
  canvas.addEventListener('pointerdown', function (e) {
    if (!view) return;
    drag = {x: e.clientX, y: e.clientY};
    canvas.setPointerCapture(e.pointerId);
  });
  canvas.addEventListener('pointermove', function (e) {
    if (!drag || !view) return;
    turn(e.clientX - drag.x, e.clientY - drag.y);
    drag = {x: e.clientX, y: e.clientY};
    request();
  });
  const end = function () { drag = null; };
  canvas.addEventListener('pointerup', end);
  canvas.addEventListener('pointercancel', end);
  canvas.addEventListener('wheel', function (e) {
    if (!view) return;
    e.preventDefault();
    view.zoom = Math.min(20, Math.max(0.2, view.zoom * Math.exp(-e.deltaY * 0.001)));
    request();
  }, {passive: false});
  canvas.addEventListener('dblclick', function () {
    if (!view) return;
    view.rot = [1, 0, 0, 0, 1, 0, 0, 0, 1]; view.zoom = 1; request();
  });
  window.addEventListener('resize', request);

  tbody.addEventListener('click', function (e) {
    const row = e.target.closest('tr');
    if (row) { history.replaceState(null, '', '#s' + row.dataset.k); open(row.dataset.k); }
  });
  tbody.addEventListener('keydown', function (e) {
    const row = e.target.closest('tr');
    if (row && e.key === 'Enter') open(row.dataset.k);
  });
  window.repelOpen = open;
  const m = /^#s(\d+)$/.exec(location.hash);
  if (m) open(m[1]);
})();
)JS";

}  // namespace

void ReportPage::add(const Audit& a, int number, const std::string& file) {
    const Molecule& m = a.structure.molecule;
    const Verdict& v = a.findings.empty() ? kClean
                       : std::any_of(a.findings.begin(), a.findings.end(),
                                     [](const Finding& f) { return f.severity == Severity::error; })
                           ? kErrors
                           : kWarnings;
    std::set<int> flagged;
    for (const Finding& f : a.findings)
        for (int atom : f.atoms)
            if (atom >= 1 && atom <= m.atom_count()) flagged.insert(atom - 1);
    const std::string title = a.title.empty() ? fmt::format("structure {}", number) : a.title;
    const std::string worst =
        a.findings.empty() ? std::string() : a.findings.front().kind + ": " + a.findings.front().message;
    rows_.push_back(fmt::format(
        "<tr data-k=\"{0}\" tabindex=\"0\"><td class=\"num\" data-v=\"{0}\">{0}</td><td>{1}</td><td title=\"{10}\">{2}:{3}</td>"
        "<td class=\"num\" data-v=\"{4}\">{4}</td><td data-v=\"{5}\"><span class=\"badge {6}\">{7}</span></td>"
        "<td class=\"num\" data-v=\"{8}\">{8}</td><td class=\"worst\" title=\"{9}\">{9}</td></tr>\n",
        number, escape_html(title), escape_html(base_name(file)), a.line, m.atom_count(), v.rank, v.css, v.name,
        a.findings.size(), escape_html(worst), escape_html(file)));

    nlohmann::json j;
    j["t"] = title;
    j["info"] = fmt::format("{}, line {}: {} atoms, {} bonds{}, charge {}, multiplicity {}", file, a.line,
                            m.atom_count(), m.bond_count(),
                            a.bonds_from_coordinates ? " (perceived from coordinates)" : "", a.charge, a.multiplicity);
    // Coordinates in the principal-axes view (the picture's), centred, to 0.001 A: the canvas starts where the
    // picture is.
    const View view = principal_view(a.structure.positions);
    nlohmann::json el = nlohmann::json::array(), xyz = nlohmann::json::array(), bonds = nlohmann::json::array();
    for (int i = 0; i < m.atom_count(); ++i) {
        const int z = m.atoms[static_cast<size_t>(i)].z;
        el.push_back(std::string(element(z).symbol));
        elements_.insert(z);
        const Eigen::Vector3d p = view.rotation * (a.structure.positions[static_cast<size_t>(i)] - view.centre);
        for (int k = 0; k < 3; ++k) xyz.push_back(round_to(p[k], 0.001));
    }
    for (const Bond& b : m.bonds) {
        bonds.push_back(b.a);
        bonds.push_back(b.b);
        bonds.push_back(b.order);
        bonds.push_back(b.aromatic ? 1 : 0);
    }
    j["el"] = el;
    j["x"] = xyz;
    j["b"] = bonds;
    j["m"] = std::vector<int>(flagged.begin(), flagged.end());
    nlohmann::json findings = nlohmann::json::array();
    for (const Finding& f : a.findings)
        findings.push_back({{"s", f.severity == Severity::error ? "error" : "warning"},
                            {"k", f.kind},
                            {"m", f.message},
                            {"a", f.atoms}});
    j["fi"] = findings;
    j["notes"] = a.notes;
    PictureOptions po;
    po.marked.assign(flagged.begin(), flagged.end());
    po.width = 520;
    if (m.atom_count() > kMaxPictureAtoms) {
        j["svg"] = fmt::format("<p class=\"empty\">No picture above {} atoms (it would weigh about 350 bytes an atom); "
                               "the 3D view below shows the structure.</p>",
                               kMaxPictureAtoms);
    } else {
        try {
            j["svg"] = picture_svg(a.structure, po);
        } catch (const std::exception& e) {
            j["svg"] = fmt::format("<p>no picture: {}</p>", escape_html(e.what()));
        }
    }
    data_.push_back(fmt::format("<script type=\"application/json\" id=\"s{}\">{}</script>\n", number, script_json(j)));
}

void ReportPage::add_failure(int number, const std::string& file, long line, const std::string& why) {
    rows_.push_back(fmt::format(
        "<tr data-k=\"{0}\" tabindex=\"0\"><td class=\"num\" data-v=\"{0}\">{0}</td><td>structure {0}</td>"
        "<td title=\"{7}\">{1}:{2}</td><td class=\"num\" data-v=\"0\"></td><td data-v=\"{3}\"><span class=\"badge {4}\">{5}</span>"
        "</td><td class=\"num\" data-v=\"0\">0</td><td class=\"worst\" title=\"{6}\">{6}</td></tr>\n",
        number, escape_html(base_name(file)), line, kNotAudited.rank, kNotAudited.css, kNotAudited.name,
        escape_html(why), escape_html(file)));
    nlohmann::json j;
    j["t"] = fmt::format("structure {}", number);
    j["info"] = fmt::format("{}, line {}", file, line);
    j["el"] = nlohmann::json::array();
    j["x"] = nlohmann::json::array();
    j["b"] = nlohmann::json::array();
    j["m"] = nlohmann::json::array();
    j["fi"] = nlohmann::json::array();
    j["error"] = why;
    data_.push_back(fmt::format("<script type=\"application/json\" id=\"s{}\">{}</script>\n", number, script_json(j)));
}

std::string ReportPage::html() const {
    std::string out;
    size_t bytes = 8192;
    for (const auto& d : data_) bytes += d.size();
    for (const auto& r : rows_) bytes += r.size();
    out.reserve(bytes);
    int counts[4] = {0, 0, 0, 0};
    for (const std::string& r : rows_)
        for (const Verdict* v : {&kClean, &kWarnings, &kErrors, &kNotAudited})
            if (r.find(fmt::format("badge {}\"", v->css)) != std::string::npos) ++counts[v->rank];
    out += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
           "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
           "<link rel=\"icon\" href=\"data:,\">\n";
    out += fmt::format("<title>repel check: {}</title>\n<style>{}</style>\n</head>\n<body>\n", escape_html(heading_), kStyle);
    out += fmt::format("<header><h1>repel check: {}</h1><p>{} structure{}: {} clean, {} with warnings, {} with errors, "
                       "{} not audited. Click a row to see the structure; click a column header to sort.</p></header>\n",
                       escape_html(heading_), rows_.size(), rows_.size() == 1 ? "" : "s", counts[0], counts[1],
                       counts[2], counts[3]);
    out += "<section class=\"legend\" aria-label=\"legend\">"
           "<span><span class=\"badge clean\">clean</span> no finding</span>"
           "<span><span class=\"badge warning\">warnings</span> findings past their threshold</span>"
           "<span><span class=\"badge error\">errors</span> at least twice the threshold, or a broken structure</span>"
           "<span><span class=\"badge failed\">not audited</span> a limit or an unsupported element</span>"
           "<span><span class=\"ring\"></span> atom named in a finding (with its number)</span>"
           "<span><span class=\"ball\"></span> atoms: shaded balls sized by covalent radius, coloured by element "
           "(each picture's own legend)</span>"
           "<span><span class=\"ball far\"></span> fainter and smaller: farther away</span>"
           "<span>sticks: one per bond order; dashed second stick: aromatic</span></section>\n";
    out += "<div class=\"layout\">\n<div>\n<div class=\"controls\"><label>Filter <input id=\"filter\" type=\"search\" "
           "placeholder=\"title, file, verdict, finding\" aria-label=\"filter the table\"></label>"
           "<span id=\"shown\"></span></div>\n<div class=\"tablebox\"><table id=\"summary\"><thead><tr>"
           "<th data-type=\"num\">#</th><th data-type=\"text\">structure</th><th data-type=\"text\">file:line</th>"
           "<th data-type=\"num\">atoms</th><th data-type=\"num\">verdict</th><th data-type=\"num\">findings</th>"
           "<th data-type=\"text\">worst finding</th></tr></thead>\n<tbody>\n";
    for (const std::string& r : rows_) out += r;
    out += "</tbody></table></div>\n</div>\n";
    out += "<section id=\"detail\" aria-live=\"polite\"><p id=\"detail-empty\" class=\"empty\">Click a row of the table "
           "to draw its structure here (only the structure opened is drawn).</p>\n<div id=\"detail-body\" hidden>"
           "<h2 id=\"detail-title\"></h2><div class=\"pair\"><div id=\"picture\"></div><div id=\"findings\"></div>"
           "</div>\n<div class=\"viewer\"><canvas id=\"view\" aria-label=\"rotatable 3D view\"></canvas>"
           "<p class=\"hint\">3D view: drag to turn, wheel to zoom, double-click to reset. Dashed rings: atoms named in "
           "a finding.</p></div></div></section>\n</div>\n";
    // Palette for the canvas: colour, drawn radius and a darker rim, per element present (the picture's table).
        nlohmann::json palette = nlohmann::json::object();
    for (int z : elements_) {
        const std::string c = element_colour(z);
        const int rgb = std::stoi(c.substr(1), nullptr, 16);
        const int r = (rgb >> 16 & 255) * 55 / 100, g = (rgb >> 8 & 255) * 55 / 100, b = (rgb & 255) * 55 / 100;
        palette[std::string(element(z).symbol)] = {c, picture_ball_radius(z),
                                                   fmt::format("#{:02x}{:02x}{:02x}", r, g, b)};
    }
    out += fmt::format("<script type=\"application/json\" id=\"palette\">{}</script>\n", script_json(palette));
    for (const std::string& d : data_) out += d;
    out += fmt::format("<script>{}</script>\n</body>\n</html>\n", kScript);
    return out;
}

}  // namespace repel
