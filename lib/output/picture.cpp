// SVG pictures of structures. The look (palette, lobes, markers, layout) is this project's own design; see
// picture.hpp for what the document holds and README.md ("Pictures") for what a reader sees.
#include "output/picture.hpp"

#include <fmt/format.h>

#include <Eigen/Eigenvalues>
#include <algorithm>
#include <array>
#include <cmath>
#include <map>
#include <numbers>
#include <set>
#include <span>
#include <stdexcept>

#include "core/element.hpp"
#include "core/geometry.hpp"
#include "output/formats.hpp"

namespace repel {
namespace {

struct Hsl {
    double hue, saturation, lightness;
};

// This project's element colours (own design, not taken from any program): one hue per group of the periodic table,
// so that chemically alike elements look alike, turning a little warmer and getting lighter down the group
// (lightness at period 2, +0.065 per period). Hydrogen and carbon, the commonest atoms, are set apart below as a
// warm off-white and a dark slate. Saturations stay moderate so that dark labels or white labels read on every ball.
// Index: IUPAC group 1..18 (0 unused); the lanthanides take kLanthanide.
constexpr std::array<Hsl, 19> kGroupColours = {{
    {0, 0, 0},           // unused
    {280, 0.45, 0.45},   // 1 alkali metals: violet
    {70, 0.45, 0.38},    // 2 alkaline earths: olive
    {205, 0.20, 0.45},   // 3  early d block: steel blue
    {205, 0.20, 0.45},   // 4
    {205, 0.20, 0.45},   // 5
    {205, 0.22, 0.45},   // 6
    {200, 0.22, 0.45},   // 7
    {30, 0.35, 0.42},    // 8  late d block: bronze
    {30, 0.35, 0.42},    // 9
    {30, 0.35, 0.42},    // 10
    {35, 0.45, 0.45},    // 11
    {45, 0.25, 0.50},    // 12
    {18, 0.50, 0.50},    // 13 boron group: terracotta
    {210, 0.12, 0.45},   // 14 carbon group (C itself below): grey blue
    {232, 0.55, 0.48},   // 15 pnictogens: indigo
    {2, 0.62, 0.47},     // 16 chalcogens: brick red, orange further down
    {105, 0.45, 0.42},   // 17 halogens: green
    {180, 0.40, 0.45},   // 18 noble gases: teal
}};
constexpr Hsl kLanthanide{330, 0.30, 0.55};
constexpr Hsl kHydrogen{40, 0.30, 0.91};
constexpr Hsl kCarbon{210, 0.12, 0.30};
constexpr double kPeriodLightening = 0.065;  // per period below period 2
constexpr double kPeriodHueTurn = 10.0;      // degrees per period below period 2

// Page and marks (own design).
constexpr const char* kPaper = "#fbfaf7";
constexpr const char* kInk = "#2b2b2b";
constexpr const char* kLonePair = "#7b5ec6";
constexpr const char* kSingleElectron = "#12897b";
constexpr const char* kMarker = "#e0218a";

struct Rgb {
    double r, g, b;  // 0..1
};

Rgb from_hsl(const Hsl& c) {
    const double h = std::fmod(c.hue, 360.0) / 60.0, s = c.saturation, l = std::clamp(c.lightness, 0.0, 1.0);
    const double chroma = (1 - std::fabs(2 * l - 1)) * s;
    const double x = chroma * (1 - std::fabs(std::fmod(h, 2.0) - 1));
    Rgb rgb{0, 0, 0};
    if (h < 1) rgb = {chroma, x, 0};
    else if (h < 2) rgb = {x, chroma, 0};
    else if (h < 3) rgb = {0, chroma, x};
    else if (h < 4) rgb = {0, x, chroma};
    else if (h < 5) rgb = {x, 0, chroma};
    else rgb = {chroma, 0, x};
    const double m = l - chroma / 2;
    return {rgb.r + m, rgb.g + m, rgb.b + m};
}

Rgb colour_of(int z) {
    if (z == 1) return from_hsl(kHydrogen);
    if (z == 6) return from_hsl(kCarbon);
    const ElementData& e = element(z);
    Hsl base = (z >= 57 && z <= 71) ? kLanthanide : kGroupColours[static_cast<size_t>(std::clamp(e.group, 1, 18))];
    const int below = std::max(0, e.period - 2);
    base.lightness += kPeriodLightening * below;
    base.hue += kPeriodHueTurn * below;
    if (e.period == 1) base.lightness += 0.15;  // helium
    return from_hsl(base);
}

Rgb mix(const Rgb& a, const Rgb& b, double t) {
    return {a.r + (b.r - a.r) * t, a.g + (b.g - a.g) * t, a.b + (b.b - a.b) * t};
}

std::string hex(const Rgb& c) {
    auto byte = [](double v) { return static_cast<int>(std::lround(std::clamp(v, 0.0, 1.0) * 255)); };
    return fmt::format("#{:02x}{:02x}{:02x}", byte(c.r), byte(c.g), byte(c.b));
}

const Rgb kPaperRgb{0xfb / 255.0, 0xfa / 255.0, 0xf7 / 255.0};
const Rgb kWhite{1, 1, 1}, kBlack{0, 0, 0};

// Depth cueing: atoms fall into kFogLevels slices from far (0) to near; a far slice is mixed with the paper colour
// by up to kFarFog and drawn up to kFarShrink smaller (a few discrete levels keep the gradients shared).
constexpr int kFogLevels = 5;
constexpr double kFarFog = 0.55;
constexpr double kFarShrink = 0.2;

// Ball-and-stick proportions in Angstrom (own choice): ball radius from the single-bond covalent radius.
constexpr double kStickWidth = 0.15;
constexpr double kStickGap = 0.17;  // between the parallel sticks of a multiple bond
constexpr double kLobeReach = 1.15; // beyond the ball
constexpr double kLobeWidth = 0.36; // half width

std::string escape(std::string_view text) { return output::escape_markup(text); }

// A line of text cut to the width it may take (an estimate: `advance` pixels a character), ending in "..." when cut;
// never inside a UTF-8 sequence.
std::string fit_line(const std::string& text, double width, double advance) {
    const size_t fits = static_cast<size_t>(std::max(4.0, width / advance));
    if (text.size() <= fits) return text;
    size_t cut = fits - 3;
    while (cut > 0 && (static_cast<unsigned char>(text[cut]) & 0xc0) == 0x80) --cut;
    return text.substr(0, cut) + "...";
}

// Centres are numbered in shape pictures up to this many atoms; beyond, numbers would cover the drawing (own choice).
constexpr int kMaxNumberedAtoms = 150;

bool light_colour(const Rgb& c) { return 0.299 * c.r + 0.587 * c.g + 0.114 * c.b > 0.55; }

struct Item {
    double depth;  // larger is nearer
    int kind;      // 0 bond, 1 lobe, 2 atom
    int index;
};

}  // namespace

std::string element_colour(int z) { return hex(colour_of(z)); }

// Ball-and-stick proportions (own choice): the ball radius grows with the single-bond covalent radius.
double picture_ball_radius(int z) { return 0.1 + 0.42 * element(z).r_single; }

std::string shape_picture_svg(const Structure& s, const MoleculeDomains& d, const std::string& title, bool hydrogens) {
    PictureOptions o;
    o.title = title;
    o.hydrogens = hydrogens;
    o.lobes = domain_lobes(s, d);
    // Lobes often stand out of the plane of largest spread (XeF4's, water's): seen from a little above that plane,
    // they no longer point at the viewer or hide each other.
    if (!o.lobes.empty()) o.tilt_degrees = 32;
    o.captions = centre_captions(s.molecule, d, &o.labelled);
    return picture_svg(s, o);
}

View principal_view(const std::vector<Eigen::Vector3d>& positions) {
    View v;
    if (positions.empty()) return v;
    Eigen::Vector3d c = Eigen::Vector3d::Zero();
    for (const auto& p : positions) c += p;
    c /= static_cast<double>(positions.size());
    v.centre = c;
    Eigen::Matrix3d cov = Eigen::Matrix3d::Zero();
    for (const auto& p : positions) cov += (p - c) * (p - c).transpose();
    Eigen::SelfAdjointEigenSolver<Eigen::Matrix3d> solver(cov);
    if (solver.info() != Eigen::Success) return v;
    // Eigenvalues come in increasing order: the last is the largest spread.
    Eigen::Vector3d x = solver.eigenvectors().col(2), y = solver.eigenvectors().col(1);
    auto settle = [&](Eigen::Vector3d& axis) {
        double third = 0, first = 0;
        for (const auto& p : positions) {
            const double t = axis.dot(p - c);
            third += t * t * t;
            first += t;
        }
        // The longer tail goes right (or up); a symmetric cloud keeps the solver's sign made canonical by its largest
        // component, so that the view does not depend on rounding.
        if (std::fabs(third) > 1e-6 * static_cast<double>(positions.size())) {
            if (third < 0) axis = -axis;
        } else {
            Eigen::Index k = 0;
            axis.cwiseAbs().maxCoeff(&k);
            if (axis[k] < 0) axis = -axis;
        }
        (void)first;
    };
    settle(x);
    settle(y);
    const Eigen::Vector3d z = x.cross(y);
    v.rotation.row(0) = x.transpose();
    v.rotation.row(1) = y.transpose();
    v.rotation.row(2) = z.transpose();
    return v;
}

std::vector<Lobe> domain_lobes(const Structure& s, const MoleculeDomains& d) {
    std::vector<Lobe> lobes;
    const int n = static_cast<int>(s.positions.size());
    for (const CentreDomains& c : d.atoms) {
        if (!(c.bonded >= 2 || c.bonded == 0)) continue;
        if (c.lone_pairs + c.single_electrons == 0) continue;
        if (c.directions.size() != c.domains.size() || c.atom < 0 || c.atom >= n) continue;
        std::vector<Eigen::Vector3d> from, to;
        for (size_t k = 0; k < c.domains.size(); ++k) {
            const Domain& dom = c.domains[k];
            if (dom.kind != DomainKind::bond || dom.neighbor < 0 || dom.neighbor >= n) continue;
            const Eigen::Vector3d v = s.positions[static_cast<size_t>(dom.neighbor)] - s.positions[static_cast<size_t>(c.atom)];
            if (v.norm() < 1e-9) continue;
            from.push_back(c.directions[k].normalized());
            to.push_back(v.normalized());
        }
        const Eigen::Matrix3d r = kabsch_rotation(from, to);
        for (size_t k = 0; k < c.domains.size(); ++k) {
            const Domain& dom = c.domains[k];
            if (dom.kind == DomainKind::bond) continue;
            Lobe lobe;
            lobe.centre = c.atom;
            lobe.direction = (r * c.directions[k]).normalized();
            lobe.single_electron = dom.kind == DomainKind::single_electron;
            lobes.push_back(lobe);
        }
    }
    return lobes;
}

std::vector<std::string> centre_captions(const Molecule& m, const MoleculeDomains& d, std::vector<int>* centres,
                                         size_t limit) {
    // Alike centres (same element, class, shape and rounded angles) share a line.
    std::map<std::string, std::vector<int>> groups;
    std::vector<std::string> order;
    for (const CentreDomains& c : d.atoms) {
        if (!(c.bonded >= 2 || c.bonded == 0)) continue;
        if (c.atom < 0 || c.atom >= m.atom_count()) continue;
        std::set<double> values;
        for (const PredictedAngle& a : c.angles) values.insert(std::round(a.degrees * 10) / 10);
        std::string angles;
        size_t shown = 0;
        for (auto it = values.rbegin(); it != values.rend() && shown < 4; ++it, ++shown)
            angles += fmt::format("{}{:.1f}", angles.empty() ? "" : ", ", *it);
        if (values.size() > 4) angles += ", ...";
        std::string geometry = c.electron_geometry;
        const int k = d.metals.centre_of_atom.empty() ? -1 : d.metals.centre_of_atom[static_cast<size_t>(c.atom)];
        if (k >= 0 && !d.metals.centres[static_cast<size_t>(k)].polyhedron.empty())
            geometry = d.metals.centres[static_cast<size_t>(k)].polyhedron;
        std::string text = c.shape == geometry || geometry.empty()
                               ? fmt::format("{}: {}", c.axe.empty() ? "centre" : c.axe, c.shape)
                               : fmt::format("{}: {} ({} electron domains)", c.axe.empty() ? "centre" : c.axe, c.shape,
                                             geometry);
        if (!angles.empty()) text += fmt::format("; angles {} deg", angles);
        if (c.delocalised_lone_pairs > 0) text += "; a lone pair delocalised (no lobe)";
        const std::string key = fmt::format("{}|{}", element(m.atoms[static_cast<size_t>(c.atom)].z).symbol, text);
        if (!groups.count(key)) order.push_back(key);
        groups[key].push_back(c.atom);
        if (centres) centres->push_back(c.atom);
    }
    std::vector<std::string> lines;
    for (const std::string& key : order) {
        if (lines.size() == limit) {
            lines.push_back(fmt::format("... and {} more kinds of centre (repel shape lists every one)",
                                        order.size() - limit));
            break;
        }
        const std::vector<int>& atoms = groups[key];
        const std::string symbol(element(m.atoms[static_cast<size_t>(atoms[0])].z).symbol);
        std::string names;
        for (size_t i = 0; i < atoms.size() && i < 6; ++i) names += fmt::format("{}{}{}", i ? " " : "", symbol, atoms[i] + 1);
        if (atoms.size() > 6) names += fmt::format(" and {} more", atoms.size() - 6);
        lines.push_back(names + "  " + key.substr(key.find('|') + 1));
    }
    return lines;
}

namespace {

// The drawing's frame: the view, each atom's rotated position, the scale and offsets from Angstrom to pixels, and the
// depth range that sets fog and shrinking.
struct Frame {
    std::vector<Eigen::Vector3d> q;     // rotated positions, Angstrom
    std::vector<Eigen::Vector3d> tips;  // lobe tips, rotated, one per lobe on a valid centre
    double xmin = 0, xmax = 0, ymin = 0, ymax = 0, zmin = 0, zmax = 0;
    double width = 0, scale = 0, ox = 0, oy = 0, margin = 24;

    double sx(const Eigen::Vector3d& p) const { return ox + p.x() * scale; }
    double sy(const Eigen::Vector3d& p) const { return oy - p.y() * scale; }  // SVG y grows downward
    double nearness(double z) const { return zmax - zmin < 1e-6 ? 1.0 : (z - zmin) / (zmax - zmin); }  // 0 far .. 1 near
    int level(double z) const { return static_cast<int>(std::lround(nearness(z) * (kFogLevels - 1))); }
    double shrink(double z) const { return 1.0 - kFarShrink * (1.0 - nearness(z)); }
    static Rgb fogged(const Rgb& c, int lv) { return mix(c, kPaperRgb, kFarFog * (1.0 - lv / double(kFogLevels - 1))); }
};

// Checks the structure can be drawn, and which atoms are shown.
std::vector<char> shown_atoms(const Structure& s, const PictureOptions& o) {
    const Molecule& m = s.molecule;
    const int n = m.atom_count();
    if (static_cast<int>(s.positions.size()) != n)
        throw std::runtime_error(fmt::format("cannot draw: the structure has {} atoms but {} positions", n,
                                             s.positions.size()));
    for (int i = 0; i < n; ++i)
        if (!s.positions[static_cast<size_t>(i)].allFinite())
            throw std::runtime_error(fmt::format("cannot draw: atom {} has a non-finite coordinate", i + 1));
    std::vector<char> shown(static_cast<size_t>(n), 1);
    if (!o.hydrogens)
        for (int i = 0; i < n; ++i)
            if (m.atoms[static_cast<size_t>(i)].z == 1) shown[static_cast<size_t>(i)] = 0;
    return shown;
}

// The view (principal axes, tilted on request), and the scale that fits what is drawn (balls and lobe tips).
Frame frame_for(const Structure& s, const PictureOptions& o, const std::vector<char>& shown) {
    const Molecule& m = s.molecule;
    const int n = m.atom_count();
    std::vector<Eigen::Vector3d> pts;
    for (int i = 0; i < n; ++i)
        if (shown[static_cast<size_t>(i)]) pts.push_back(s.positions[static_cast<size_t>(i)]);
    View view = principal_view(pts);
    if (o.tilt_degrees != 0) {
        const double t = o.tilt_degrees * std::numbers::pi / 180.0;
        const double u = 0.7 * t;
        Eigen::Matrix3d about_x, about_y;
        about_x << 1, 0, 0, 0, std::cos(t), -std::sin(t), 0, std::sin(t), std::cos(t);
        about_y << std::cos(u), 0, std::sin(u), 0, 1, 0, -std::sin(u), 0, std::cos(u);
        view.rotation = about_y * about_x * view.rotation;
    }
    Frame f;
    f.q.resize(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) f.q[static_cast<size_t>(i)] = view.rotation * (s.positions[static_cast<size_t>(i)] - view.centre);

    // Extent in Angstrom of what is drawn (balls and lobe tips), to fit the drawing.
    bool any = false;
    auto grow = [&](const Eigen::Vector3d& p, double r) {
        if (!any) {
            f.xmin = p.x() - r, f.xmax = p.x() + r, f.ymin = p.y() - r, f.ymax = p.y() + r, f.zmin = f.zmax = p.z();
            any = true;
            return;
        }
        f.xmin = std::min(f.xmin, p.x() - r), f.xmax = std::max(f.xmax, p.x() + r);
        f.ymin = std::min(f.ymin, p.y() - r), f.ymax = std::max(f.ymax, p.y() + r);
        f.zmin = std::min(f.zmin, p.z()), f.zmax = std::max(f.zmax, p.z());
    };
    for (int i = 0; i < n; ++i)
        if (shown[static_cast<size_t>(i)]) grow(f.q[static_cast<size_t>(i)], picture_ball_radius(m.atoms[static_cast<size_t>(i)].z));
    for (const Lobe& l : o.lobes) {
        if (l.centre < 0 || l.centre >= n) continue;
        const double reach = picture_ball_radius(m.atoms[static_cast<size_t>(l.centre)].z) + kLobeReach;
        f.tips.push_back(f.q[static_cast<size_t>(l.centre)] + view.rotation * l.direction * reach);
        grow(f.tips.back(), kLobeWidth);
    }
    f.width = std::max(240, o.width);
    const double spread_x = std::max(f.xmax - f.xmin, 1.0), spread_y = std::max(f.ymax - f.ymin, 1.0);
    // At most 70 px per Angstrom (a small molecule is not blown up), and never taller than wide.
    f.scale = std::min(70.0, (f.width - 2 * f.margin) / spread_x);
    f.scale = std::min(f.scale, (f.width - 2 * f.margin) / spread_y);
    const double title_h = o.title.empty() ? 0 : 30;
    const double draw_w = spread_x * f.scale;
    f.ox = (f.width - draw_w) / 2 - f.xmin * f.scale;
    f.oy = f.margin + title_h + f.ymax * f.scale;
    return f;
}

// The legend below the drawing: what is drawn, laid out in rows.
struct LegendEntry {
    std::string kind, text;
    int z = 0;
};
struct Legend {
    std::vector<LegendEntry> entries;
    std::vector<std::pair<double, double>> positions;  // offsets from the legend's top left
    int rows = 0;
};

Legend legend_for(const Molecule& m, const PictureOptions& o, const std::vector<char>& shown,
                  const std::set<int>& elements, double width, double margin) {
    const int n = m.atom_count();
    Legend legend;
    std::set<int> orders;
    bool aromatic = false;
    for (const Bond& b : m.bonds) {
        if (b.a < 0 || b.a >= n || b.b < 0 || b.b >= n) continue;
        if (!shown[static_cast<size_t>(b.a)] || !shown[static_cast<size_t>(b.b)]) continue;
        if (b.aromatic) aromatic = true;
        else orders.insert(std::clamp(b.order, 1, 3));
    }
    bool lone_pairs = false, single_electrons = false;
    for (const Lobe& l : o.lobes) (l.single_electron ? single_electrons : lone_pairs) = true;
    if (o.legend) {
        // Carbon and hydrogen first, then by atomic number.
        std::vector<int> els(elements.begin(), elements.end());
        std::stable_sort(els.begin(), els.end(), [](int a, int b) {
            auto rank = [](int z) { return z == 6 ? 0 : z == 1 ? 1 : 2; };
            return rank(a) < rank(b);
        });
        for (int z : els) legend.entries.push_back({"element", std::string(element(z).symbol), z});
        static const char* kOrderNames[] = {"", "single bond", "double bond", "triple bond"};
        for (int k : orders) legend.entries.push_back({"order" + std::to_string(k), kOrderNames[k]});
        if (aromatic) legend.entries.push_back({"aromatic", "aromatic bond"});
        if (lone_pairs) legend.entries.push_back({"lone-pair", "lone pair (two dots)"});
        if (single_electrons) legend.entries.push_back({"single-electron", "single electron (one dot)"});
        if (!o.marked.empty()) legend.entries.push_back({"marker", "atom named in a finding"});
        legend.entries.push_back({"depth", "fainter and smaller: farther away"});
    }
    // Lay the legend out in rows (an estimated text width: 7 px a character at 12 px).
    double lx = margin, ly = 0;
    legend.rows = legend.entries.empty() ? 0 : 1;
    for (const LegendEntry& e : legend.entries) {
        const double w = 26 + 7.0 * static_cast<double>(e.text.size()) + 16;
        if (lx + w > width - margin && lx > margin) {
            lx = margin;
            ly += 22;
            ++legend.rows;
        }
        legend.positions.emplace_back(lx, ly);
        lx += w;
    }
    return legend;
}

template <typename... A>
void append_to(std::string& out, fmt::format_string<A...> f, A&&... args) {
    fmt::format_to(std::back_inserter(out), f, std::forward<A>(args)...);
}

// One bond: one stick per bond order (two for aromatic), each half in its atom's colour.
void draw_bond(std::string& out, const Frame& f, const Molecule& m, int index, double depth) {
    const Bond& bond = m.bonds[static_cast<size_t>(index)];
    const Eigen::Vector3d& pa = f.q[static_cast<size_t>(bond.a)];
    const Eigen::Vector3d& pb = f.q[static_cast<size_t>(bond.b)];
    const double ax = f.sx(pa), ay = f.sy(pa), bx = f.sx(pb), by = f.sy(pb);
    double dx = bx - ax, dy = by - ay;
    const double len = std::hypot(dx, dy);
    if (len > 1e-9) dx /= len, dy /= len;
    else dx = 1, dy = 0;
    const double px = -dy, py = dx;  // perpendicular in the drawing plane
    const double shrink = f.shrink(depth);
    const int lv = f.level(depth);
    const int sticks = bond.aromatic ? 2 : std::clamp(bond.order, 1, 3);
    // Never thinner than half a pixel or smaller than a pixel across: a long structure drawn small stays
    // visible as a trace of its atoms.
    const double w = std::max(0.5, kStickWidth * f.scale * shrink * (sticks == 1 ? 1.0 : 0.72));
    const double mx = (ax + bx) / 2, my = (ay + by) / 2;
    const std::string ca = hex(mix(Frame::fogged(colour_of(m.atoms[static_cast<size_t>(bond.a)].z), lv), kBlack, 0.12));
    const std::string cb = hex(mix(Frame::fogged(colour_of(m.atoms[static_cast<size_t>(bond.b)].z), lv), kBlack, 0.12));
    append_to(out, "<g class=\"bond\" data-bond=\"{}\" data-order=\"{}\"{}>", index + 1, bond.order,
              bond.aromatic ? " data-aromatic=\"1\"" : "");
    // An aromatic bond: the solid stick on the bond line (in line with the single bonds) and the dashed one
    // on the side of its ring (where another aromatic neighbour of the first atom lies).
    double ring_side = 0;
    if (bond.aromatic) {
        for (const Neighbor& nb : m.neighbors(bond.a)) {
            if (nb.atom == bond.b || !m.bonds[static_cast<size_t>(nb.bond)].aromatic) continue;
            const Eigen::Vector3d& pc = f.q[static_cast<size_t>(nb.atom)];
            ring_side = (f.sx(pc) - ax) * px + (f.sy(pc) - ay) * py >= 0 ? 1 : -1;
            break;
        }
    }
    for (int k = 0; k < sticks; ++k) {
        const double off = ring_side != 0 ? k * ring_side * kStickGap * 1.15 * f.scale * shrink
                                          : (k - (sticks - 1) / 2.0) * kStickGap * f.scale * shrink;
        const char* dash = (bond.aromatic && k == 1) ? " stroke-dasharray=\"3 3\"" : "";
        append_to(out, "<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" stroke=\"{}\" stroke-width=\"{:.1f}\"{}/>",
                  ax + px * off, ay + py * off, mx + px * off, my + py * off, ca, w, dash);
        append_to(out, "<line x1=\"{:.1f}\" y1=\"{:.1f}\" x2=\"{:.1f}\" y2=\"{:.1f}\" stroke=\"{}\" stroke-width=\"{:.1f}\"{}/>",
                  mx + px * off, my + py * off, bx + px * off, by + py * off, cb, w, dash);
    }
    append_to(out, "</g>\n");
}

// One lone pair or single electron: a lobe from its centre with two dots (a pair) or one (a single electron).
void draw_lobe(std::string& out, const Frame& f, const Lobe& l, const Eigen::Vector3d& tip, double depth) {
    const Eigen::Vector3d& c = f.q[static_cast<size_t>(l.centre)];
    const double shrink = f.shrink(depth);
    const double cx = f.sx(c), cy = f.sy(c), tx = f.sx(tip), ty = f.sy(tip);
    const double half = std::hypot(tx - cx, ty - cy) / 2;
    const double w = kLobeWidth * f.scale * shrink;
    const double rx = std::max(half, w), ry = w;
    const double angle = std::atan2(ty - cy, tx - cx) * 180.0 / std::numbers::pi;
    const double ex = (cx + tx) / 2, ey = (cy + ty) / 2;
    const char* colour = l.single_electron ? kSingleElectron : kLonePair;
    const double fade = 0.45 + 0.4 * f.nearness(depth);
    append_to(out, "<g class=\"lobe-group\"><ellipse class=\"lobe {}\" data-centre=\"{}\" data-direction=\"{:.4f} {:.4f} {:.4f}\" "
              "cx=\"{:.1f}\" cy=\"{:.1f}\" rx=\"{:.1f}\" ry=\"{:.1f}\" transform=\"rotate({:.1f} {:.1f} {:.1f})\" "
              "fill=\"{}\" fill-opacity=\"{:.2f}\" stroke=\"{}\" stroke-opacity=\"{:.2f}\" stroke-width=\"1.2\"/>",
              l.single_electron ? "single-electron" : "lone-pair", l.centre + 1, l.direction.x(), l.direction.y(),
              l.direction.z(), ex, ey, rx, ry, angle, ex, ey, colour, 0.35 * fade + 0.1, colour, fade);
    // The electrons: two dots across a lone pair, one for a single electron, near the lobe's outer end.
    const double ux = half > 1e-9 ? (tx - cx) / (2 * half) : 0, uy = half > 1e-9 ? (ty - cy) / (2 * half) : 0;
    const double dotx = ex + ux * rx * 0.35, doty = ey + uy * rx * 0.35;
    const double dr = std::max(1.2, 0.07 * f.scale * shrink);
    if (l.single_electron) {
        append_to(out, "<circle cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"{:.1f}\" fill=\"{}\" fill-opacity=\"{:.2f}\"/>", dotx, doty,
                  dr, colour, fade);
    } else {
        const double gx = -uy * w * 0.45, gy = ux * w * 0.45;
        const double sepx = half > 1e-9 ? gx : w * 0.45, sepy = half > 1e-9 ? gy : 0;
        append_to(out, "<circle cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"{:.1f}\" fill=\"{}\" fill-opacity=\"{:.2f}\"/>"
                  "<circle cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"{:.1f}\" fill=\"{}\" fill-opacity=\"{:.2f}\"/>",
                  dotx + sepx, doty + sepy, dr, colour, fade, dotx - sepx, doty - sepy, dr, colour, fade);
    }
    append_to(out, "</g>\n");
}

// How an atom is labelled: marked (a finding names it), numbered (a caption names it), or its symbol (a heteroatom).
struct AtomLabels {
    std::vector<char> marked, labelled;
    bool heteroatoms = true;
};

// One atom: a shaded ball, and its label; a marked atom's marker and label go to `overlay` (drawn on top).
void draw_atom(std::string& out, std::string& overlay, const Frame& f, const Molecule& m, int i, const AtomLabels& labels) {
    const int n = m.atom_count();
    const int z = m.atoms[static_cast<size_t>(i)].z;
    const Eigen::Vector3d& p = f.q[static_cast<size_t>(i)];
    const double r = std::max(0.6, picture_ball_radius(z) * f.scale * f.shrink(p.z()));
    const int lv = f.level(p.z());
    const double x = f.sx(p), y = f.sy(p);
    append_to(out, "<circle class=\"atom\" data-atom=\"{}\" data-element=\"{}\" cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"{:.1f}\" "
              "fill=\"url(#g{}-{})\"/>\n",
              i + 1, element(z).symbol, x, y, r, z, lv);
    if (labels.marked[static_cast<size_t>(i)] != 0) {
        // Markers go on top of everything (drawn after the drawing), so a nearer atom never hides one.
        append_to(overlay,
                  "<circle class=\"marker\" data-atom=\"{}\" cx=\"{:.1f}\" cy=\"{:.1f}\" r=\"{:.1f}\" "
                  "fill=\"none\" stroke=\"{}\" stroke-width=\"2.5\" stroke-dasharray=\"5 3\"/>\n"
                  "<text class=\"label\" x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"12\" font-weight=\"bold\" "
                  "fill=\"{}\" stroke=\"{}\" stroke-width=\"3\" paint-order=\"stroke\">{}{}</text>\n",
                  i + 1, x, y, r + 4, kMarker, x + r * 0.8 + 3, y - r * 0.8 - 2, kMarker, kPaper,
                  element(z).symbol, i + 1);
        return;
    }
    const bool numbered = labels.labelled[static_cast<size_t>(i)] != 0 && n <= kMaxNumberedAtoms;
    const bool plain = labels.heteroatoms && z != 6 && z != 1;
    if (!numbered && !plain) return;
    const std::string text = numbered ? fmt::format("{}{}", element(z).symbol, i + 1) : std::string(element(z).symbol);
    const double size = std::clamp(r * 0.9, 9.0, 15.0);
    const bool light = light_colour(Frame::fogged(colour_of(z), lv));
    // A label wider than the ball goes beside it (to the lower right), with a paper-coloured halo.
    const bool inside = 0.6 * size * static_cast<double>(text.size()) < 1.7 * r;
    if (inside)
        append_to(out, "<text class=\"label\" x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"{:.0f}\" text-anchor=\"middle\" "
                  "dominant-baseline=\"central\" fill=\"{}\">{}</text>\n",
                  x, y, size, light ? kInk : "#ffffff", text);
    else
        append_to(out, "<text class=\"label\" x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"{:.0f}\" fill=\"{}\" stroke=\"{}\" "
                  "stroke-width=\"3\" paint-order=\"stroke\">{}</text>\n",
                  x + r * 0.75, y + r * 0.75 + size * 0.8, size, kInk, kPaper, text);
}

// The legend's swatches and words.
void draw_legend(std::string& out, const Legend& legend, double legend_top) {
    if (legend.entries.empty()) return;
    append_to(out, "<g class=\"legend\" font-size=\"12\" fill=\"{}\">\n", kInk);
    for (size_t k = 0; k < legend.entries.size(); ++k) {
        const LegendEntry& e = legend.entries[k];
        const double x = legend.positions[k].first, y = legend_top + legend.positions[k].second + 11;
        if (e.kind == "element") {
            append_to(out, "<circle cx=\"{:.0f}\" cy=\"{:.0f}\" r=\"8\" fill=\"url(#g{}-{})\"/>", x + 8, y, e.z, kFogLevels - 1);
        } else if (e.kind.rfind("order", 0) == 0 || e.kind == "aromatic") {
            const int k2 = e.kind == "aromatic" ? 2 : e.kind.back() - '0';
            for (int j = 0; j < k2; ++j) {
                const double off = (j - (k2 - 1) / 2.0) * 4;
                append_to(out, "<line x1=\"{:.0f}\" y1=\"{:.1f}\" x2=\"{:.0f}\" y2=\"{:.1f}\" stroke=\"#555\" stroke-width=\"2\"{}/>", x,
                          y + off, x + 18, y + off, e.kind == "aromatic" && j == 1 ? " stroke-dasharray=\"3 2\"" : "");
            }
        } else if (e.kind == "lone-pair" || e.kind == "single-electron") {
            const char* colour = e.kind == "lone-pair" ? kLonePair : kSingleElectron;
            append_to(out, "<ellipse cx=\"{:.0f}\" cy=\"{:.0f}\" rx=\"10\" ry=\"6\" fill=\"{}\" fill-opacity=\"0.45\" stroke=\"{}\"/>",
                      x + 9, y, colour, colour);
        } else if (e.kind == "marker") {
            append_to(out, "<circle cx=\"{:.0f}\" cy=\"{:.0f}\" r=\"7\" fill=\"none\" stroke=\"{}\" stroke-width=\"2.5\" "
                      "stroke-dasharray=\"5 3\"/>",
                      x + 8, y, kMarker);
        } else {
            append_to(out, "<circle cx=\"{:.0f}\" cy=\"{:.0f}\" r=\"5\" fill=\"#c3c8cd\"/><circle cx=\"{:.0f}\" cy=\"{:.0f}\" "
                      "r=\"7\" fill=\"#56606a\"/>",
                      x + 15, y - 1, x + 6, y + 1);
        }
        append_to(out, "<text x=\"{:.0f}\" y=\"{:.0f}\" dominant-baseline=\"central\">{}</text>\n", x + 26, y, escape(e.text));
    }
    append_to(out, "</g>\n");
}

// Everything in the drawing, far to near (painter's order). A bond sits at the depth of its farther atom and goes
// before a ball at the same depth, so both of its balls cover its ends (a flat molecule has every bond under its
// atoms).
std::vector<Item> painter_order(const Molecule& m, const PictureOptions& o, const std::vector<char>& shown, const Frame& f) {
    const int n = m.atom_count();
    std::vector<Item> items;
    items.reserve(static_cast<size_t>(n) + m.bonds.size() + o.lobes.size());
    for (int i = 0; i < n; ++i)
        if (shown[static_cast<size_t>(i)]) items.push_back({f.q[static_cast<size_t>(i)].z(), 2, i});
    for (size_t b = 0; b < m.bonds.size(); ++b) {
        const Bond& bond = m.bonds[b];
        if (bond.a < 0 || bond.a >= n || bond.b < 0 || bond.b >= n || bond.a == bond.b) continue;
        if (!shown[static_cast<size_t>(bond.a)] || !shown[static_cast<size_t>(bond.b)]) continue;
        items.push_back({std::min(f.q[static_cast<size_t>(bond.a)].z(), f.q[static_cast<size_t>(bond.b)].z()), 0, static_cast<int>(b)});
    }
    for (size_t k = 0, t = 0; k < o.lobes.size(); ++k) {
        const Lobe& l = o.lobes[k];
        if (l.centre < 0 || l.centre >= n) continue;
        const Eigen::Vector3d mid = (f.q[static_cast<size_t>(l.centre)] + f.tips[t++]) / 2;
        items.push_back({mid.z(), 1, static_cast<int>(k)});
    }
    std::stable_sort(items.begin(), items.end(), [](const Item& a, const Item& b) {
        return a.depth < b.depth || (a.depth == b.depth && a.kind < b.kind);
    });
    return items;
}

}  // namespace

std::string picture_svg(const Structure& s, const PictureOptions& o) {
    const Molecule& m = s.molecule;
    const int n = m.atom_count();
    const std::vector<char> shown = shown_atoms(s, o);
    const Frame f = frame_for(s, o, shown);
    std::set<int> elements;
    for (int i = 0; i < n; ++i)
        if (shown[static_cast<size_t>(i)]) elements.insert(m.atoms[static_cast<size_t>(i)].z);
    // Legend and caption rows below the drawing: the height depends on them.
    const Legend legend = legend_for(m, o, shown, elements, f.width, f.margin);
    const double below = f.oy + (-f.ymin) * f.scale + 16;
    const double captions_h = 18.0 * static_cast<double>(o.captions.size());
    const double legend_top = below + captions_h + (o.captions.empty() ? 0 : 8);
    const double height = legend_top + 22.0 * legend.rows + f.margin - 6;

    std::string out;
    out.reserve(static_cast<size_t>(n) * 260 + 4096);
    append_to(out, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    append_to(out, "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{:.0f}\" height=\"{:.0f}\" viewBox=\"0 0 {:.0f} {:.0f}\" "
              "font-family=\"sans-serif\" data-atoms=\"{}\" data-scale=\"{:.3f}\">\n",
              f.width, height, f.width, height, n, f.scale);
    append_to(out, "<title>{}</title>\n", escape(o.title.empty() ? std::string("repel picture") : o.title));
    append_to(out, "<rect width=\"100%\" height=\"100%\" fill=\"{}\"/>\n", kPaper);

    // One radial gradient per element and depth level actually used: light from the upper left.
    std::set<std::pair<int, int>> used;
    for (int i = 0; i < n; ++i)
        if (shown[static_cast<size_t>(i)]) used.insert({m.atoms[static_cast<size_t>(i)].z, f.level(f.q[static_cast<size_t>(i)].z())});
    for (int z : elements) used.insert({z, kFogLevels - 1});  // the legend's swatches
    append_to(out, "<defs>\n");
    for (const auto& [z, lv] : used) {
        const Rgb base = Frame::fogged(colour_of(z), lv);
        append_to(out, "<radialGradient id=\"g{}-{}\" cx=\"0.5\" cy=\"0.5\" r=\"0.5\" fx=\"0.33\" fy=\"0.3\">"
                  "<stop offset=\"0\" stop-color=\"{}\"/><stop offset=\"0.5\" stop-color=\"{}\"/>"
                  "<stop offset=\"1\" stop-color=\"{}\"/></radialGradient>\n",
                  z, lv, hex(mix(base, kWhite, 0.6)), hex(base), hex(mix(base, kBlack, 0.45)));
    }
    append_to(out, "</defs>\n");
    if (!o.title.empty())
        append_to(out, "<text x=\"{:.0f}\" y=\"{:.0f}\" font-size=\"16\" fill=\"{}\" class=\"title\">{}</text>\n", f.margin,
                  f.margin + 10, kInk, escape(fit_line(o.title, f.width - 2 * f.margin, 9.0)));

    AtomLabels labels;
    labels.marked.assign(static_cast<size_t>(n), 0);
    labels.labelled.assign(static_cast<size_t>(n), 0);
    for (int a : o.marked)
        if (a >= 0 && a < n) labels.marked[static_cast<size_t>(a)] = 1;
    for (int a : o.labelled)
        if (a >= 0 && a < n) labels.labelled[static_cast<size_t>(a)] = 1;
    labels.heteroatoms = n <= 400;  // beyond, labels would only hide the drawing
    std::vector<size_t> tip_of(o.lobes.size(), 0);
    for (size_t k = 0, t = 0; k < o.lobes.size(); ++k)
        if (o.lobes[k].centre >= 0 && o.lobes[k].centre < n) tip_of[k] = t++;

    std::string overlay;
    append_to(out, "<g class=\"drawing\">\n");
    for (const Item& it : painter_order(m, o, shown, f)) {
        if (it.kind == 0)
            draw_bond(out, f, m, it.index, it.depth);
        else if (it.kind == 1)
            draw_lobe(out, f, o.lobes[static_cast<size_t>(it.index)], f.tips[tip_of[static_cast<size_t>(it.index)]], it.depth);
        else
            draw_atom(out, overlay, f, m, it.index, labels);
    }
    append_to(out, "</g>\n");
    if (!overlay.empty()) append_to(out, "<g class=\"markers\">\n{}</g>\n", overlay);

    double cy = below;
    for (const std::string& line : o.captions) {
        cy += 18;
        append_to(out, "<text class=\"caption\" x=\"{:.0f}\" y=\"{:.0f}\" font-size=\"13\" fill=\"{}\">{}</text>\n", f.margin,
                  cy - 4, kInk, escape(fit_line(line, f.width - 2 * f.margin, 7.3)));
    }
    draw_legend(out, legend, legend_top);
    append_to(out, "</svg>\n");
    return out;
}

}  // namespace repel
