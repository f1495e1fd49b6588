#include "check/clean.hpp"

#include <fmt/format.h>

#include <Eigen/Geometry>
#include <cmath>
#include <optional>
#include <set>

#include "check/expected_length.hpp"
#include "check/shape_measure.hpp"
#include "core/element.hpp"
#include "core/error.hpp"
#include "domains/domains.hpp"
#include "refine/refine.hpp"

namespace repel {
namespace {

double signed_volume(const std::vector<Eigen::Vector3d>& p, int c, int a, int b, int d) {
    const Eigen::Vector3d& o = p[static_cast<size_t>(c)];
    return (p[static_cast<size_t>(a)] - o).dot((p[static_cast<size_t>(b)] - o).cross(p[static_cast<size_t>(d)] - o));
}

double torsion(const std::vector<Eigen::Vector3d>& p, int a, int b, int c, int d) {
    const Eigen::Vector3d b1 = p[static_cast<size_t>(b)] - p[static_cast<size_t>(a)];
    const Eigen::Vector3d b2 = p[static_cast<size_t>(c)] - p[static_cast<size_t>(b)];
    const Eigen::Vector3d b3 = p[static_cast<size_t>(d)] - p[static_cast<size_t>(c)];
    const Eigen::Vector3d n1 = b1.cross(b2), n2 = b2.cross(b3);
    return std::atan2(b2.norm() * b1.dot(n2), n1.dot(n2)) * 180.0 / M_PI;
}

// A signed volume below this (A^3) is too flat to say which hand the centre has; it is not kept.
constexpr double kMinVolume = 0.1;

// CShM of a metal centre's ligand directions (a hapto ligand at its centroid) against the model's directions.
double model_shape(const MetalCentre& c, const std::vector<Eigen::Vector3d>& pos) {
    const int cn = c.coordination_number;
    if (cn < 2 || cn > 9 || static_cast<int>(c.directions.size()) != cn) return 0;
    std::vector<Eigen::Vector3d> dirs;
    for (const LigandDomain& l : c.ligands) {
        Eigen::Vector3d p = Eigen::Vector3d::Zero();
        for (int a : l.atoms) p += pos[static_cast<size_t>(a)];
        const Eigen::Vector3d v = p / static_cast<double>(l.atoms.size()) - pos[static_cast<size_t>(c.atom)];
        if (v.norm() < 1e-6) return 100;
        dirs.push_back(v.normalized());
    }
    ReferencePolyhedron model{c.polyhedron, "", cn, {}};
    for (const Eigen::Vector3d& d : c.directions) model.points.push_back(d.normalized());
    return continuous_shape_measure(dirs, Eigen::Vector3d::Zero(), model);
}

// Findings about the atoms or their connections, which relaxing the coordinates cannot fix: the summary of the
// refusal that names what can, or nothing when the structure can be refined.
std::optional<std::string> refusal(const Audit& audit) {
    // The advice names only what applies: no --multiplicity or --charge when one was given (by option or file).
    const std::pair<const char*, const char*> kRefusals[] = {
        {"overlap", "atoms overlap: move or delete the misplaced atom by hand"},
        {"neighbours", "an atom has more neighbours than its valence allows: move or delete the extra atom by hand"},
        {"radical", audit.multiplicity_given
                        ? "an atom is short of a normal valence that the multiplicity given does not account for: "
                          "add the missing atom by hand"
                        : "an atom is short of a normal valence: add the missing atom by hand, or give "
                          "--multiplicity if the structure is open-shell"},
        {"charge", audit.charge_given
                       ? "the formal charges do not add up to the total charge given: add or remove the hydrogens "
                         "by hand"
                       : "the formal charges do not add up to the total charge: give --charge, or add or remove the "
                         "hydrogens by hand"},
        {"multiplicity", "the multiplicity does not fit the electron count: give the right --multiplicity"}};
    // Overlaps first whatever the order of the findings: the atom they misplace is the cause of the others.
    for (const Finding& f : audit.findings)
        if (f.kind == "overlap") {
            return fmt::format("not refined: {}", kRefusals[0].second);
        }
    for (const Finding& f : audit.findings)
        for (const auto& [kind, advice] : kRefusals)
            if (f.kind == kind) {
                return fmt::format("not refined: {}", advice);
            }
    return std::nullopt;
}

// The handedness of every stereocentre and the configuration of every double bond as they are: kept by the
// refinement.
void stereo_as_found(const Molecule& m, const MoleculeDomains& d, const std::vector<Eigen::Vector3d>& pos,
                     std::vector<ChiralTarget>& chiral, std::vector<DoubleBondTarget>& doubles) {
    const Molecule& skeleton = m;
    for (int i = 0; i < m.atom_count(); ++i) {
        const auto& nb = skeleton.neighbors(i);
        if (nb.size() < 3 || d.atoms[static_cast<size_t>(i)].steric_number != 4) continue;
        const double v = signed_volume(pos, i, nb[0].atom, nb[1].atom, nb[2].atom);
        if (std::fabs(v) < kMinVolume) continue;
        chiral.push_back({i, nb[0].atom, nb[1].atom, nb[2].atom, v > 0 ? 1 : -1});
    }
    for (const Bond& b : m.bonds) {
        if (b.order != 2) continue;
        int a = -1, c = -1;
        for (const Neighbor& x : skeleton.neighbors(b.a))
            if (x.atom != b.b) { a = x.atom; break; }
        for (const Neighbor& x : skeleton.neighbors(b.b))
            if (x.atom != b.a) { c = x.atom; break; }
        if (a < 0 || c < 0 || a == c) continue;  // a == c: the double bond of a three-membered ring
        doubles.push_back({a, b.a, b.b, c, std::fabs(torsion(pos, a, b.a, b.b, c)) < 90});
    }
}

}  // namespace

CleanResult clean_structure(const Audit& audit) {
    CleanResult out;
    out.structure = audit.structure;
    if (std::optional<std::string> refused = refusal(audit)) {
        out.summary = *refused;
        return out;
    }
    const Molecule& m = out.structure.molecule;
    auto& pos = out.structure.positions;
    try {
        // A complex is refined with its metals analysed as the build analyses them (metal.hpp); hapto ligands are
        // refused below, so the skeleton is the whole molecule.
        bool any_metal = false;
        for (const Atom& a : m.atoms) any_metal = any_metal || is_d_block_metal(a.z);
        MetalAnalysis metals;
        if (any_metal) metals = analyse_metals(m, true);
        // Measured: refining repel's own ferrocene and CpMn(CO)3 from their built coordinates bent every ring
        // hydrogen out of its ring plane (angle sums 345 deg; the refinement holds a centre planar only with three
        // neighbours, and a ring atom has four with its metal). Refused until it keeps them planar; then refine as
        // build_structure does (the skeleton without hapto bonds, ring_graph, lengths for the hapto bonds).
        if (!metals.hapto_bonds.empty()) {
            out.summary = fmt::format("not refined: atom {} ({}) has a hapto ligand, and the refinement does not keep "
                                      "the ring atoms of hapto ligands planar yet; the structure is left as it was",
                                      metals.hapto_bonds.front().first + 1,
                                      element(m.atoms[static_cast<size_t>(metals.hapto_bonds.front().first)].z).symbol);
            return out;
        }
        // Nothing found, nothing to change: refining a sound structure would only move it toward the model's own
        // lengths and ring angles (measured on G2: spiropentane's ring bonds 0.07 A, cyclopropene's 0.04 A).
        if (audit.findings.empty()) {
            out.refined = true;  // written as it is
            out.summary = "nothing to fix (no findings): written unchanged";
            return out;
        }
        MoleculeDomains d = analyse_domains(m, true, any_metal ? &metals : nullptr);
        // Only what is wrong is changed: a bond without a length finding keeps its measured length as the target, so
        // that cleaning a sound structure does not move its bonds to the model's lengths (the model's own errors, up
        // to 0.1 A on G2, would become the structure's).
        // An atom named in a finding was probably moved, which changes all its bonds (a ring carbon pulled 0.3 A
        // along one bond shortens its other ring bond by 0.12 A, under the threshold): its bonds take the model's
        // lengths too.
        if (d.bond_lengths.size() == m.bonds.size()) {
            // The lengths the audit judged against (the analysis' corrected by kind of bond).
            d.bond_lengths = corrected_lengths(m, d.bond_lengths);
            std::set<int> flagged;
            for (const Finding& f : audit.findings)
                for (int a : f.atoms) flagged.insert(a - 1);
            for (size_t e = 0; e < m.bonds.size(); ++e) {
                const Bond& b = m.bonds[e];
                if (flagged.count(b.a) || flagged.count(b.b)) continue;
                d.bond_lengths[e] = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
            }
        }
        std::vector<ChiralTarget> chiral;
        std::vector<DoubleBondTarget> doubles;
        stereo_as_found(m, d, pos, chiral, doubles);
        const std::vector<Eigen::Vector3d> before = pos;
        RefineResult r = refine_structure(m, d, chiral, doubles, pos);
        // The refinement must keep each metal's polyhedron: a centre that ends further from the model's polyhedron
        // than the audit's threshold, and further than it started, is left as it was (a refusal, said).
        for (const MetalCentre& c : metals.centres) {
            const double after = model_shape(c, pos), start = model_shape(c, before);
            if (after > AuditOptions{}.metal_shape && after > start) {
                pos = before;
                out.summary = fmt::format("not refined: the refinement would take the {} polyhedron of {}{} to CShM "
                                          "{:.2f} (from {:.2f}); the structure is left as it was",
                                          c.polyhedron, element(m.atoms[static_cast<size_t>(c.atom)].z).symbol,
                                          c.atom + 1, after, start);
                return out;
            }
        }
        double s = 0;
        for (size_t i = 0; i < pos.size(); ++i) s += (pos[i] - before[i]).squaredNorm();
        out.rms_shift = pos.empty() ? 0 : std::sqrt(s / static_cast<double>(pos.size()));
        out.refined = true;
        out.summary = fmt::format("refined ({} iterations{}), atoms moved {:.3f} A RMS; {} centres and {} double bonds "
                                  "kept",
                                  r.iterations, r.converged ? "" : ", not converged: " + r.message, out.rms_shift,
                                  chiral.size(), doubles.size());
    } catch (const std::exception& e) {
        out.summary = std::string("not refined: ") + e.what();
    }
    return out;
}

}  // namespace repel
