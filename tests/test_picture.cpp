// Pictures (lib/output/picture.cpp) and the check report page (lib/check/report_page.cpp): the SVG is well-formed
// XML (a small checker of our own below), and pictures of reference species show what they must (lobe count and
// directions, atom and bond counts, depth cueing), read from the drawing's data attributes rather than pixels.
#include <gtest/gtest.h>

#include <Eigen/Geometry>
#include <algorithm>
#include <cmath>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "api/front_door.hpp"
#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "check/report_page.hpp"
#include "domains/domains.hpp"
#include "input/species.hpp"
#include "input/structure_reader.hpp"
#include "output/picture.hpp"

using namespace repel;

namespace {

// A minimal XML well-formedness checker (XML 1.0: one root element, properly nested and closed tags, quoted
// attributes without '<', no duplicate attribute, only the five predefined or numeric entity references, nothing
// but whitespace or comments/processing instructions outside the root). Returns the elements in document order.
struct Element {
    std::string name;
    std::map<std::string, std::string> attrs;
    std::string text;  // character data directly inside (entities left as written)
};

bool name_char(char c) { return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == ':' || c == '.'; }

bool good_entities(const std::string& s) {
    for (size_t i = 0; i < s.size(); ++i) {
        if (s[i] != '&') continue;
        const size_t semi = s.find(';', i);
        if (semi == std::string::npos) return false;
        const std::string ent = s.substr(i + 1, semi - i - 1);
        static const char* kNamed[] = {"amp", "lt", "gt", "quot", "apos"};
        bool ok = std::find(std::begin(kNamed), std::end(kNamed), ent) != std::end(kNamed);
        if (!ok && ent.size() > 1 && ent[0] == '#')
            ok = std::all_of(ent.begin() + 1, ent.end(), [](char c) { return std::isxdigit(static_cast<unsigned char>(c)) || c == 'x'; });
        if (!ok) return false;
    }
    return true;
}

// Throws std::runtime_error with the reason when `xml` is not well-formed.
std::vector<Element> parse_xml(const std::string& xml) {
    std::vector<Element> out;
    std::vector<std::string> open;
    std::vector<size_t> open_index;
    bool root_seen = false;
    size_t i = 0;
    auto fail = [&](const std::string& why) { throw std::runtime_error(why + " at byte " + std::to_string(i)); };
    while (i < xml.size()) {
        if (xml[i] != '<') {
            const size_t next = xml.find('<', i);
            const std::string text = xml.substr(i, next == std::string::npos ? std::string::npos : next - i);
            if (open.empty() && text.find_first_not_of(" \t\r\n") != std::string::npos) fail("text outside the root");
            if (!good_entities(text)) fail("bad entity in text");
            if (text.find('>') != std::string::npos && text.find("]]>") != std::string::npos) fail("]]> in text");
            if (!open.empty()) out[open_index.back()].text += text;
            i = next == std::string::npos ? xml.size() : next;
            continue;
        }
        if (xml.compare(i, 4, "<!--") == 0) {
            const size_t end = xml.find("-->", i);
            if (end == std::string::npos) fail("unclosed comment");
            i = end + 3;
            continue;
        }
        if (xml.compare(i, 2, "<?") == 0) {
            const size_t end = xml.find("?>", i);
            if (end == std::string::npos) fail("unclosed processing instruction");
            i = end + 2;
            continue;
        }
        if (xml.compare(i, 2, "</") == 0) {
            size_t j = i + 2;
            while (j < xml.size() && name_char(xml[j])) ++j;
            const std::string name = xml.substr(i + 2, j - i - 2);
            while (j < xml.size() && std::isspace(static_cast<unsigned char>(xml[j]))) ++j;
            if (j >= xml.size() || xml[j] != '>') fail("bad end tag");
            if (open.empty() || open.back() != name) fail("end tag </" + name + "> does not match");
            open.pop_back();
            open_index.pop_back();
            i = j + 1;
            continue;
        }
        size_t j = i + 1;
        while (j < xml.size() && name_char(xml[j])) ++j;
        Element e;
        e.name = xml.substr(i + 1, j - i - 1);
        if (e.name.empty()) fail("empty tag name");
        if (open.empty() && root_seen) fail("second root element");
        bool self_closing = false;
        for (;;) {
            while (j < xml.size() && std::isspace(static_cast<unsigned char>(xml[j]))) ++j;
            if (j >= xml.size()) fail("unclosed tag");
            if (xml[j] == '>') { ++j; break; }
            if (xml.compare(j, 2, "/>") == 0) { j += 2; self_closing = true; break; }
            const size_t a = j;
            while (j < xml.size() && name_char(xml[j])) ++j;
            const std::string attr = xml.substr(a, j - a);
            if (attr.empty() || j >= xml.size() || xml[j] != '=') fail("attribute without a value");
            ++j;
            if (j >= xml.size() || (xml[j] != '"' && xml[j] != '\'')) fail("unquoted attribute");
            const char quote = xml[j];
            const size_t end = xml.find(quote, j + 1);
            if (end == std::string::npos) fail("unclosed attribute value");
            const std::string value = xml.substr(j + 1, end - j - 1);
            if (value.find('<') != std::string::npos || !good_entities(value)) fail("bad attribute value");
            if (e.attrs.count(attr)) fail("duplicate attribute " + attr);
            e.attrs[attr] = value;
            j = end + 1;
        }
        root_seen = true;
        out.push_back(e);
        if (!self_closing) {
            open.push_back(e.name);
            open_index.push_back(out.size() - 1);
        }
        i = j;
    }
    if (!open.empty()) throw std::runtime_error("unclosed element <" + open.back() + ">");
    if (!root_seen) throw std::runtime_error("no root element");
    return out;
}

bool has_class(const Element& e, const std::string& c) {
    auto it = e.attrs.find("class");
    if (it == e.attrs.end()) return false;
    std::istringstream words(it->second);
    std::string w;
    while (words >> w)
        if (w == c) return true;
    return false;
}

std::vector<Element> with_class(const std::vector<Element>& all, const std::string& c) {
    std::vector<Element> out;
    for (const Element& e : all)
        if (has_class(e, c)) out.push_back(e);
    return out;
}

Eigen::Vector3d direction_of(const Element& lobe) {
    std::istringstream in(lobe.attrs.at("data-direction"));
    Eigen::Vector3d d;
    in >> d.x() >> d.y() >> d.z();
    return d;
}

struct Drawn {
    Structure structure;
    MoleculeDomains domains;
    std::string svg;
    std::vector<Element> elements;
};

Drawn draw_shape(const std::string& text, TextNotation notation = TextNotation::automatic, bool hydrogens = true) {
    Drawn d;
    const Shape sh = shape(text, {.notation = notation});
    d.domains = sh.detail->domains;
    d.structure = build(sh.molecule);
    d.svg = shape_picture_svg(d.structure, d.domains, text, hydrogens);
    d.elements = parse_xml(d.svg);
    return d;
}

int atom_of_element(const Structure& s, int z) {
    for (int i = 0; i < s.molecule.atom_count(); ++i)
        if (s.molecule.atoms[static_cast<size_t>(i)].z == z) return i;
    return -1;
}

Eigen::Vector3d bond_unit(const Structure& s, int from, int to) {
    return (s.positions[static_cast<size_t>(to)] - s.positions[static_cast<size_t>(from)]).normalized();
}

}  // namespace

TEST(XmlChecker, RejectsWhatIsNotWellFormed) {
    EXPECT_NO_THROW(parse_xml("<?xml version=\"1.0\"?>\n<a x=\"1\"><b/>t &amp; u</a>\n"));
    EXPECT_THROW(parse_xml("<a><b></a></b>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a x=1/>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a>&nbsp;</a>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a x=\"1\" x=\"2\"/>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a/><b/>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a>"), std::runtime_error);
    EXPECT_THROW(parse_xml("<a t=\"<\"/>"), std::runtime_error);
}

// XeF4, AX4E2 (square planar): two lone-pair lobes at Xe, opposite each other and perpendicular to the Xe-F bonds;
// the terminal F atoms get none (their lone pairs are not drawn: they are not centres).
TEST(Picture, SquarePlanarXenonHasTwoOppositeLobes) {
    const Drawn d = draw_shape("XeF4", TextNotation::formula);
    EXPECT_EQ(with_class(d.elements, "atom").size(), 5u);
    const auto lobes = with_class(d.elements, "lone-pair");
    ASSERT_EQ(lobes.size(), 2u);
    const int xe = atom_of_element(d.structure, 54);
    ASSERT_GE(xe, 0);
    for (const Element& l : lobes) EXPECT_EQ(l.attrs.at("data-centre"), std::to_string(xe + 1));
    const Eigen::Vector3d a = direction_of(lobes[0]), b = direction_of(lobes[1]);
    EXPECT_LT(a.dot(b), -0.99);
    for (const Neighbor& nb : d.structure.molecule.neighbors(xe)) {
        EXPECT_LT(std::fabs(a.dot(bond_unit(d.structure, xe, nb.atom))), 0.05);
        EXPECT_LT(std::fabs(b.dot(bond_unit(d.structure, xe, nb.atom))), 0.05);
    }
    EXPECT_TRUE(with_class(d.elements, "single-electron").empty());
    // The caption names the class and the shape.
    bool caption = false;
    for (const Element& e : with_class(d.elements, "caption"))
        caption = caption || (e.text.find("AX4E2") != std::string::npos && e.text.find("square planar") != std::string::npos);
    EXPECT_TRUE(caption);
}

// SF4, AX4E (seesaw): one lobe at S, in the plane of the two equatorial F atoms, pointing away from them (opposite
// their bisector), and perpendicular to the axial F-S-F line.
TEST(Picture, SeesawSulfurHasOneEquatorialLobe) {
    const Drawn d = draw_shape("SF4", TextNotation::formula);
    const auto lobes = with_class(d.elements, "lone-pair");
    ASSERT_EQ(lobes.size(), 1u);
    const int s = atom_of_element(d.structure, 16);
    const Eigen::Vector3d lobe = direction_of(lobes[0]);
    std::vector<int> f;
    for (const Neighbor& nb : d.structure.molecule.neighbors(s)) f.push_back(nb.atom);
    ASSERT_EQ(f.size(), 4u);
    // The axial pair: the widest F-S-F angle.
    size_t ia = 0, ib = 1;
    double widest = 2;
    for (size_t i = 0; i < 4; ++i)
        for (size_t j = i + 1; j < 4; ++j) {
            const double c = bond_unit(d.structure, s, f[i]).dot(bond_unit(d.structure, s, f[j]));
            if (c < widest) widest = c, ia = i, ib = j;
        }
    Eigen::Vector3d bisector = Eigen::Vector3d::Zero();
    for (size_t i = 0; i < 4; ++i)
        if (i != ia && i != ib) bisector += bond_unit(d.structure, s, f[i]);
    EXPECT_LT(lobe.dot(bisector.normalized()), -0.97);
    const Eigen::Vector3d axis = (bond_unit(d.structure, s, f[ia]) - bond_unit(d.structure, s, f[ib])).normalized();
    EXPECT_LT(std::fabs(lobe.dot(axis)), 0.1);
}

// Water: two lone pairs at O, on the side away from the hydrogens, out of the H-O-H plane by equal amounts.
TEST(Picture, WaterLobesStandOutOfTheMolecularPlane) {
    const Drawn d = draw_shape("O");
    const auto lobes = with_class(d.elements, "lone-pair");
    ASSERT_EQ(lobes.size(), 2u);
    const int o = atom_of_element(d.structure, 8);
    std::vector<Eigen::Vector3d> h;
    for (const Neighbor& nb : d.structure.molecule.neighbors(o)) h.push_back(bond_unit(d.structure, o, nb.atom));
    const Eigen::Vector3d normal = h[0].cross(h[1]).normalized(), bis = (h[0] + h[1]).normalized();
    const Eigen::Vector3d a = direction_of(lobes[0]), b = direction_of(lobes[1]);
    EXPECT_LT(a.dot(bis), -0.2);
    EXPECT_LT(b.dot(bis), -0.2);
    EXPECT_NEAR(a.dot(normal), -b.dot(normal), 0.02);
    EXPECT_GT(std::fabs(a.dot(normal)), 0.5);
}

// A radical centre: the nitrogen of NO2 carries one single-electron lobe, drawn differently from a lone pair.
TEST(Picture, NitrogenDioxideHasASingleElectronLobe) {
    const Drawn d = draw_shape("NO2", TextNotation::formula);
    const auto singles = with_class(d.elements, "single-electron");
    ASSERT_EQ(singles.size(), 1u);
    EXPECT_EQ(singles[0].attrs.at("data-centre"), std::to_string(atom_of_element(d.structure, 7) + 1));
}

// Chair cyclohexane: 18 atoms and 18 bonds with hydrogens, 6 and 6 without; no lobes (every carbon is AX4); depth
// cueing makes the carbons' balls differ in size.
TEST(Picture, ChairCyclohexaneCounts) {
    const Drawn with_h = draw_shape("C1CCCCC1");
    EXPECT_EQ(with_class(with_h.elements, "atom").size(), 18u);
    EXPECT_EQ(with_class(with_h.elements, "bond").size(), 18u);
    EXPECT_TRUE(with_class(with_h.elements, "lobe").empty());
    double rmin = 1e9, rmax = 0;
    for (const Element& e : with_class(with_h.elements, "atom")) {
        if (e.attrs.at("data-element") != "C") continue;
        const double r = std::stod(e.attrs.at("r"));
        rmin = std::min(rmin, r), rmax = std::max(rmax, r);
    }
    EXPECT_GT(rmax / rmin, 1.03);  // a chair is not flat: some carbons are farther than others
    const Drawn no_h = draw_shape("C1CCCCC1", TextNotation::automatic, false);
    EXPECT_EQ(with_class(no_h.elements, "atom").size(), 6u);
    EXPECT_EQ(with_class(no_h.elements, "bond").size(), 6u);
    for (const Element& e : with_class(no_h.elements, "atom")) EXPECT_EQ(e.attrs.at("data-element"), "C");
}

// Bond orders are visible: ethyne's C#C is three parallel sticks, carbon dioxide's C=O two.
TEST(Picture, MultipleBondsAreParallelSticks) {
    for (const auto& [smiles, order] : std::vector<std::pair<std::string, int>>{{"C#C", 3}, {"O=C=O", 2}}) {
        const Structure s = build(smiles);
        const std::string svg = picture_svg(s);
        const auto all = parse_xml(svg);
        // Each stick is two lines (a half per atom, each in its atom's colour).
        size_t lines = 0;
        bool in_bond = false;
        for (const Element& e : all) {
            if (has_class(e, "bond")) in_bond = e.attrs.at("data-order") == std::to_string(order);
            else if (e.name == "line" && in_bond) ++lines;
            else if (e.name != "line") in_bond = false;
        }
        EXPECT_EQ(lines, 2u * order * (order == 3 ? 1 : 2)) << smiles;
    }
}

// Hostile titles and marked atoms: the document stays well-formed, the title is escaped, each marked atom gets one
// marker ring.
TEST(Picture, TitleIsEscapedAndMarkedAtomsAreRinged) {
    const Structure s = build("CCO");
    PictureOptions o;
    o.title = std::string("</svg><x a=\"1\"> & 'y' \x01 \xff\xfe");
    o.marked = {0, 2};
    const std::string svg = picture_svg(s, o);
    const auto all = parse_xml(svg);
    EXPECT_NE(svg.find("&lt;/svg&gt;"), std::string::npos);
    const auto markers = with_class(all, "marker");
    ASSERT_EQ(markers.size(), 2u);
    EXPECT_EQ(markers[0].attrs.at("data-atom") == "1" || markers[1].attrs.at("data-atom") == "1", true);
}

// The view: the largest spread lies along the drawing's x axis, the smallest along the line of sight, right-handed.
TEST(Picture, PrincipalViewPutsTheLargestSpreadAcross) {
    std::vector<Eigen::Vector3d> pts;
    for (int i = -5; i <= 5; ++i) {
        pts.emplace_back(Eigen::Vector3d(i, i, 0) * 1.0 + Eigen::Vector3d(0, 0, 0.1 * (i % 2)));
        pts.emplace_back(Eigen::Vector3d(i, i, 0) * 1.0 + Eigen::Vector3d(0.5, -0.5, 0));
    }
    const View v = principal_view(pts);
    EXPECT_NEAR(std::fabs(v.rotation.row(0).dot(Eigen::Vector3d(1, 1, 0).normalized())), 1.0, 1e-3);
    EXPECT_NEAR(std::fabs(v.rotation.row(2).dot(Eigen::Vector3d(0, 0, 1))), 1.0, 0.05);
    EXPECT_NEAR(v.rotation.determinant(), 1.0, 1e-9);
}

// The report page: one inert JSON block per structure, a title that tries to close the script cannot, the flagged
// atoms of a finding are listed for the script, and the page needs nothing from the network.
TEST(ReportPage, IsSelfContainedAndEscapesTitles) {
    std::istringstream in(
        "3\n</script><script>alert(1)</script>\nO 0 0 0\nH 0.96 0 0\nH -0.24 0.93 0\n"
        "3\nsquashed water\nO 0 0 0\nH 0.96 0 0\nH 0.5 0.2 0\n");
    const auto read = read_structures(in, InputFormat::xyz);
    ASSERT_EQ(read.size(), 2u);
    ReportPage page("two waters");
    for (size_t k = 0; k < read.size(); ++k) page.add(audit_structure(read[k]), static_cast<int>(k + 1), "w.xyz");
    page.add_failure(3, "w.xyz", 11, "gave up");
    const std::string html = page.html();
    auto count = [&](const std::string& what) {
        size_t n = 0;
        for (size_t at = html.find(what); at != std::string::npos; at = html.find(what, at + 1)) ++n;
        return n;
    };
    EXPECT_EQ(count("<script"), count("</script>"));  // no block was closed early by a title
    EXPECT_EQ(count("<script type=\"application/json\" id=\"s"), 3u);
    EXPECT_EQ(count("<tr data-k="), 3u);
    // Nothing is fetched: no source or link to another address, no import (the SVG's xmlns is a name, not a fetch).
    for (const char* fetch : {"src=", "href=\"http", "href=\\\"http", "url(http", "@import", "<link rel=\"stylesheet"})
        EXPECT_EQ(html.find(fetch), std::string::npos) << fetch;
    EXPECT_NE(html.find("not audited"), std::string::npos);
}

// Past 20,000 atoms a structure's entry carries no SVG picture (the 3D view still has its coordinates); below, it does.
TEST(ReportPage, LargeStructuresGetTheViewOnly) {
    auto entry = [](int atoms) {
        Audit a;
        a.title = "chain";
        for (int i = 0; i < atoms; ++i) {
            Atom atom;
            atom.z = 6;
            a.structure.molecule.add_atom(atom);
            a.structure.positions.emplace_back(1.5 * i, 0.1 * (i % 3), 0);
        }
        ReportPage page("large");
        page.add(a, 1, "chain.xyz");
        return page.html();
    };
    const std::string small = entry(50), large = entry(20001);
    EXPECT_NE(small.find("\\u003csvg"), std::string::npos);
    EXPECT_EQ(small.find("No picture above"), std::string::npos);
    EXPECT_EQ(large.find("\\u003csvg"), std::string::npos);
    EXPECT_NE(large.find("No picture above 20000 atoms"), std::string::npos);
}

// The same structure always gives the same bytes (no clock, no randomness), and a non-finite coordinate is refused
// like the writers refuse it, naming the atom.
TEST(Picture, DeterministicAndRefusesNonFiniteCoordinates) {
    Structure s = build("CC(=O)Oc1ccccc1C(=O)O");
    EXPECT_EQ(picture_svg(s), picture_svg(s));
    s.positions[3].y() = std::nan("");
    try {
        (void)picture_svg(s);
        ADD_FAILURE() << "a NaN coordinate was drawn";
    } catch (const std::runtime_error& e) {
        EXPECT_NE(std::string(e.what()).find("atom 4"), std::string::npos) << e.what();
    }
}

// The legend names every element drawn and each bond kind present, and nothing absent.
TEST(Picture, LegendListsWhatIsDrawn) {
    const Drawn d = draw_shape("CC(=O)N");
    std::string legend;
    for (const Element& e : d.elements)
        if (e.name == "text") legend += e.text + "|";
    for (const char* item : {"C|", "H|", "N|", "O|", "single bond|", "double bond|", "farther away"})
        EXPECT_NE(legend.find(item), std::string::npos) << item;
    EXPECT_EQ(legend.find("triple bond"), std::string::npos);
    EXPECT_EQ(legend.find("single electron"), std::string::npos);
}
