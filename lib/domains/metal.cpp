// Metal centres: the ionic model, the ligand domains on the sphere (Kepert), the d-count exceptions, bond lengths and
// spin. See metal.hpp.
#include "domains/metal.hpp"

#include <fmt/format.h>

#include <Eigen/Geometry>
#include <algorithm>
#include <array>
#include <cmath>
#include <numeric>

#include "core/element.hpp"
#include "core/error.hpp"
#include "domains/metal_lengths.hpp"
#include "domains/model.hpp"
#include "graph/polyhedral_stereo.hpp"
#include "sphere/sphere.hpp"

namespace repel {

using Eigen::Vector3d;

namespace {

size_t at(int i) { return static_cast<size_t>(i); }

// Kepert's ligand-ligand repulsion (Inorganic Stereochemistry, 1982; Prog. Inorg. Chem. 23 (1977) 1): donor atoms
// at their metal-ligand distances, energy sum 1/d^n over donor pairs. Kepert used n = 6 for most of his tables; the
// polyhedra of coordination numbers 2-9 (linear, trigonal planar, tetrahedron, trigonal bipyramid, octahedron,
// pentagonal bipyramid, square antiprism, tricapped trigonal prism) are the minima for any n in the usual range.
constexpr double kKepertExponent = 6.0;
// Repulsion weight of a hydride ligand against 1 for every other donor (see place_ligands).
constexpr double kHydrideWeight = 0.3;
// Jahn-Teller elongation of an octahedral d9 or high-spin d4 centre (Jahn and Teller, Proc. R. Soc. A 161 (1937)
// 220): two trans bonds long, four short. Hexaaqua copper(II) in crystals: about 1.97 A equatorial and 2.3-2.4 A
// axial against a mean near 2.08 A (from memory): -0.06 and +0.28 A from the undistorted length (chosen so that the
// mean of the six is kept; common practice).
constexpr double kJahnTellerEquatorial = -0.06;
constexpr double kJahnTellerAxial = 0.28;

std::string roman(int n) {
    static const char* names[] = {"0", "I", "II", "III", "IV", "V", "VI", "VII", "VIII", "IX", "X"};
    if (n >= 0 && n <= 10) return names[n];
    if (n < 0 && n >= -4) return std::string("-") + names[-n];
    return std::to_string(n);
}

std::string metal_label(const Molecule& m, int i, int ox) {
    return fmt::format("{}({})", element(m.atoms[at(i)].z).symbol, roman(ox));
}

// Ligand-field class of a sigma donor (the spectrochemical series, Tsuchida 1938; common practice): halides, O and S
// donors weak (0); sp3 N donors (ammonia, amines) intermediate (1); C donors (CO, CN-, alkyls, aryls), P and As
// donors, hydride, and N donors with a pi bond (pyridine, bipyridine, imines, nitriles) strong (2).
int field_class(const Molecule& m, int donor) {
    const Atom& a = m.atoms[at(donor)];
    const int group = element(a.z).group;
    if (a.z == 1 || a.z == 6 || (group == 15 && a.z != 7)) return 2;
    if (a.z == 7) {
        for (const Neighbor& nb : m.neighbors(donor)) {
            const Bond& b = m.bonds[at(nb.bond)];
            if (is_d_block_metal(m.atoms[at(nb.atom)].z)) continue;
            if (b.order >= 2 || b.aromatic) return 2;
        }
        return 1;
    }
    return 0;
}

std::string donor_label(const Molecule& m, int donor) {
    const Atom& a = m.atoms[at(donor)];
    int h = 0;
    for (const Neighbor& nb : m.neighbors(donor))
        if (m.atoms[at(nb.atom)].z == 1) ++h;
    std::string s(element(a.z).symbol);
    if (h > 0) s += h == 1 ? "H" : fmt::format("H{}", h);
    return s;
}

// The ideal directions of a named polyhedron (for a user's override), sites in a fixed order.
std::vector<Vector3d> named_polyhedron(const std::string& name, int sites) {
    const double s3 = std::sqrt(3.0) / 2;
    std::vector<Vector3d> v;
    if (name == "linear") v = {Vector3d::UnitZ(), -Vector3d::UnitZ()};
    else if (name == "trigonal planar") v = {Vector3d::UnitX(), Vector3d(-0.5, s3, 0), Vector3d(-0.5, -s3, 0)};
    else if (name == "T-shaped") v = {Vector3d::UnitX(), Vector3d::UnitY(), -Vector3d::UnitX()};
    else if (name == "tetrahedral")
        v = {Vector3d(1, 1, 1).normalized(), Vector3d(1, -1, -1).normalized(), Vector3d(-1, 1, -1).normalized(),
             Vector3d(-1, -1, 1).normalized()};
    else if (name == "square planar") v = {Vector3d::UnitX(), Vector3d::UnitY(), -Vector3d::UnitX(), -Vector3d::UnitY()};
    else if (name == "seesaw")
        v = {Vector3d::UnitZ(), -Vector3d::UnitZ(), Vector3d::UnitX(), Vector3d(-0.5, s3, 0)};
    else if (name == "trigonal bipyramidal")
        v = {Vector3d::UnitZ(), -Vector3d::UnitZ(), Vector3d::UnitX(), Vector3d(-0.5, s3, 0), Vector3d(-0.5, -s3, 0)};
    else if (name == "square pyramidal") {
        // Apex-base angle 104 degrees (common practice for square-pyramidal complexes; it minimises the repulsion
        // of five equal points with the base held square).
        const double t = 104.0 * M_PI / 180;
        v = {Vector3d::UnitZ()};
        for (int k = 0; k < 4; ++k)
            v.emplace_back(std::sin(t) * std::cos(k * M_PI / 2), std::sin(t) * std::sin(k * M_PI / 2), std::cos(t));
    } else if (name == "octahedral")
        v = {Vector3d::UnitZ(), -Vector3d::UnitZ(), Vector3d::UnitX(), -Vector3d::UnitX(), Vector3d::UnitY(),
             -Vector3d::UnitY()};
    else if (name == "trigonal prismatic") {
        // Square side faces: the ideal trigonal prism inscribed in the sphere.
        const double h = std::sqrt(3.0 / 7.0), r = std::sqrt(4.0 / 7.0);
        for (int z : {1, -1})
            for (int k = 0; k < 3; ++k) v.emplace_back(r * std::cos(2 * M_PI * k / 3), r * std::sin(2 * M_PI * k / 3), z * h);
    } else if (name == "pentagonal bipyramidal") {
        v = {Vector3d::UnitZ(), -Vector3d::UnitZ()};
        for (int k = 0; k < 5; ++k) v.emplace_back(std::cos(2 * M_PI * k / 5), std::sin(2 * M_PI * k / 5), 0);
    } else if (name == "square antiprismatic") {
        // Polar angle of the square antiprism with equal edges inscribed in the unit sphere: 59.26 degrees (from memory).
        const double t = 59.26 * M_PI / 180;
        for (int z : {1, -1})
            for (int k = 0; k < 4; ++k) {
                const double phi = M_PI / 2 * k + (z < 0 ? M_PI / 4 : 0);
                v.emplace_back(std::sin(t) * std::cos(phi), std::sin(t) * std::sin(phi), z * std::cos(t));
            }
    } else if (name == "cubic") {
        for (int x : {1, -1})
            for (int y : {1, -1})
                for (int z : {1, -1}) v.push_back(Vector3d(x, y, z).normalized());
    }
    if (static_cast<int>(v.size()) != sites) return {};
    return v;
}

// The k free sites that lie closest together (smallest sum of pairwise angles): where a hapto ligand that takes k
// coordination sites goes (a cyclopentadienyl ring on a fac face of an octahedron, common practice).
std::vector<int> closest_sites(const std::vector<Vector3d>& sites, const std::vector<char>& taken, int k) {
    std::vector<int> free;
    for (size_t i = 0; i < sites.size(); ++i)
        if (!taken[i]) free.push_back(static_cast<int>(i));
    std::vector<int> best;
    double best_cost = 1e300;
    const int n = static_cast<int>(free.size());
    auto cost = [&](const std::vector<int>& set) {
        double c = 0;
        for (size_t a = 0; a < set.size(); ++a)
            for (size_t b = a + 1; b < set.size(); ++b)
                c += std::acos(std::clamp(sites[at(set[a])].dot(sites[at(set[b])]), -1.0, 1.0));
        return c;
    };
    if (k == 1) return free.empty() ? best : std::vector<int>{free[0]};
    for (int a = 0; a < n; ++a)
        for (int b = a + 1; b < n; ++b) {
            if (k == 2) {
                std::vector<int> set{free[at(a)], free[at(b)]};
                const double c = cost(set);
                if (c < best_cost - 1e-9) best_cost = c, best = set;
                continue;
            }
            for (int c3 = b + 1; c3 < n; ++c3) {
                std::vector<int> set{free[at(a)], free[at(b)], free[at(c3)]};
                const double c = cost(set);
                if (c < best_cost - 1e-9) best_cost = c, best = set;
            }
        }
    return best;
}

class MetalAnalyser {
public:
    MetalAnalyser(const Molecule& m, bool solve, const MetalOptions& options) : m_(m), solve_(solve), options_(options) {}

    MetalAnalysis run() {
        const int n = m_.atom_count();
        out_.centre_of_atom.assign(at(n), -1);
        out_.hapto_atom.assign(at(n), 0);
        for (int i = 0; i < n; ++i) {
            const int z = m_.atoms[at(i)].z;
            if (is_f_block_metal(z))
                throw UnsupportedError(fmt::format(
                    "atom {} ({}) is an f-block (lanthanide) centre; repel's metal model covers the d block only "
                    "(no shape is claimed for f-block centres)",
                    i + 1, element(z).symbol));
            if (!is_d_block_metal(z)) continue;
            out_.centre_of_atom[at(i)] = static_cast<int>(out_.centres.size());
            MetalCentre c;
            c.atom = i;
            out_.centres.push_back(c);
        }
        for (const auto& [atom, name] : options_.polyhedra)
            if (atom < 0 || atom >= n || out_.centre_of_atom[at(atom)] < 0)
                throw InputError(fmt::format("a polyhedron was asked for atom {}, which is not a d-block metal centre",
                                             atom + 1));
        if (out_.centres.empty()) return std::move(out_);
        for (MetalCentre& c : out_.centres) find_ligands(c);
        count_electrons();
        for (MetalCentre& c : out_.centres) {
            choose_polyhedron(c);
            choose_spin(c);
            set_lengths(c);
            if (solve_) place_ligands(c);
        }
        return std::move(out_);
    }

private:
    const Molecule& m_;
    bool solve_;
    const MetalOptions& options_;
    MetalAnalysis out_;
    std::vector<int> taken_;  // per centre: electrons its ligands took (ionic model)

    bool is_metal(int i) const { return is_d_block_metal(m_.atoms[at(i)].z); }

    // Sigma donors in neighbour order; groups of neighbours bonded to each other (contiguous pi systems) are hapto
    // ligands.
    void find_ligands(MetalCentre& c) {
        const int metal = c.atom;
        std::vector<int> nbrs;
        std::vector<LigandDomain> metals;
        for (const Neighbor& nb : m_.neighbors(metal)) {
            if (is_metal(nb.atom)) {
                // A metal-metal bond takes a site of its own (Mn2(CO)10: five carbonyls and the other Mn).
                c.metal_metal_bonds += m_.bonds[at(nb.bond)].order;
                LigandDomain d;
                d.atoms = {nb.atom};
                d.bond_order = m_.bonds[at(nb.bond)].order;
                d.field = 2;
                d.label = fmt::format("{} (metal-metal bond)", element(m_.atoms[at(nb.atom)].z).symbol);
                metals.push_back(d);
                continue;
            }
            nbrs.push_back(nb.atom);
        }
        std::vector<int> group(nbrs.size(), -1);
        int groups = 0;
        for (size_t s = 0; s < nbrs.size(); ++s) {
            if (group[s] >= 0) continue;
            group[s] = groups;
            std::vector<size_t> stack{s};
            while (!stack.empty()) {
                const size_t u = stack.back();
                stack.pop_back();
                for (size_t v = 0; v < nbrs.size(); ++v)
                    if (group[v] < 0 && m_.bond_between(nbrs[u], nbrs[v]) >= 0) {
                        group[v] = groups;
                        stack.push_back(v);
                    }
            }
            ++groups;
        }
        std::vector<LigandDomain> hapto;
        for (int g = 0; g < groups; ++g) {
            std::vector<int> atoms;
            for (size_t s = 0; s < nbrs.size(); ++s)
                if (group[s] == g) atoms.push_back(nbrs[s]);
            LigandDomain d;
            if (atoms.size() == 1) {
                d.atoms = atoms;
                d.bond_order = m_.bonds[at(m_.bond_between(metal, atoms[0]))].order;
                d.field = field_class(m_, atoms[0]);
                d.label = donor_label(m_, atoms[0]);
                c.ligands.push_back(d);
                continue;
            }
            std::sort(atoms.begin(), atoms.end());
            d.atoms = atoms;
            const int eta = static_cast<int>(atoms.size());
            // Coordination sites of a hapto ligand: one per electron pair it gives (alkene 1; allyl, diene 2;
            // cyclopentadienyl, arene 3), at most 3 (common practice of organometallic electron counting, Green,
            // J. Organomet. Chem. 500 (1995) 127).
            d.sites = eta <= 2 ? 1 : eta <= 4 ? 2 : 3;
            d.field = 2;
            d.label = fmt::format("eta{} ligand (atoms {}..{})", eta, atoms.front() + 1, atoms.back() + 1);
            for (int a : atoms) {
                out_.hapto_atom[at(a)] = 1;
                out_.hapto_bonds.emplace_back(metal, a);
            }
            hapto.push_back(d);
        }
        for (LigandDomain& d : metals) c.ligands.push_back(std::move(d));
        // Sigma ligands (donors and metals) in the order of Molecule::neighbors(metal), then the hapto ligands.
        std::vector<int> rank(at(m_.atom_count()), 0);
        int r = 0;
        for (const Neighbor& nb : m_.neighbors(metal)) rank[at(nb.atom)] = r++;
        std::stable_sort(c.ligands.begin(), c.ligands.end(),
                         [&](const LigandDomain& a, const LigandDomain& b) { return rank[at(a.atoms[0])] < rank[at(b.atoms[0])]; });
        for (LigandDomain& d : hapto) c.ligands.push_back(std::move(d));
        c.coordination_number = static_cast<int>(c.ligands.size());
        c.sites = 0;
        for (const LigandDomain& d : c.ligands) c.sites += d.sites;
    }

    // Sum of bond orders from atom i to atoms that are not d-block metals (its own skeleton), hydrogens included.
    int nonmetal_order_sum(int i) const {
        int s = std::max(0, m_.atoms[at(i)].hydrogens);
        for (const Neighbor& nb : m_.neighbors(i))
            if (!is_metal(nb.atom)) s += m_.bonds[at(nb.bond)].order;
        return s;
    }

    // A heteroatom-stabilised carbene on one metal (an N-heterocyclic carbene, a Fischer carbene): a neutral carbon
    // with two single bonds to non-metals, at least one of them N, O or S, and one bond to a metal. Cut off the metal
    // it is the closed-shell singlet carbene, a lone-pair (L-type) donor, whether the bond is written single or
    // double (common practice: the M-C bond of NHC complexes is a dative single bond, Au-C 1.99-2.03 A in (NHC)AuCl,
    // from memory).
    bool heteroatom_carbene(int i) const {
        const Atom& a = m_.atoms[at(i)];
        if (a.z != 6 || a.charge != 0 || std::max(0, a.hydrogens) != 0) return false;
        int nonmetal = 0, metal = 0, hetero = 0;
        for (const Neighbor& nb : m_.neighbors(i)) {
            const Atom& o = m_.atoms[at(nb.atom)];
            if (is_metal(nb.atom)) {
                ++metal;
                continue;
            }
            if (m_.bonds[at(nb.bond)].order != 1 || m_.bonds[at(nb.bond)].aromatic) return false;
            ++nonmetal;
            if ((o.z == 7 || o.z == 8 || o.z == 16) && o.charge == 0) ++hetero;
        }
        return metal == 1 && nonmetal == 2 && hetero >= 1;
    }

    // The ionic model (reference-data.md: the ligands cut off the metal as closed-shell species): each donor takes
    // from the metal the electrons that make its ligand closed-shell (an octet, a duet for hydrogen; period-3 and
    // heavier donors may keep an expanded octet), at most one per bond-order unit to metals. Those units are the
    // covalent (X-type) part of its metal bonds, the rest dative (L-type, one lone pair each). Written formal
    // charges take part: NH3 and [NH3+]-[Pt-] give the same metal. Atoms of hapto ligands take one electron where
    // the ring or chain as written has an odd one (a cyclopentadienyl radical becomes C5H5-).
    void count_electrons() {
        taken_.assign(out_.centres.size(), 0);
        for (int i = 0; i < m_.atom_count(); ++i) {
            if (is_metal(i)) continue;
            if (out_.hapto_atom[at(i)])
                count_hapto_atom(i);
            else
                count_donor(i);
        }
        set_oxidation_states();
    }

    // An atom of a hapto ligand takes one electron where the ring or chain as written has an odd one.
    void count_hapto_atom(int i) {
        const Atom& a = m_.atoms[at(i)];
        const ElementData& el = element(a.z);
        const int n0 = el.valence_electrons - a.charge - nonmetal_order_sum(i);
        if (n0 % 2 != 0) {
            if (!a.bracket)
                out_.warnings.push_back(fmt::format(
                    "atom {} ({}) of a hapto ligand is written without brackets, so its bond to the metal counts "
                    "in its hydrogen count (OpenSMILES) and the ligand is read as an anion; for the neutral "
                    "ligand write the hydrogens in brackets (ethylene: [CH2]=[CH2])",
                    i + 1, el.symbol));
            for (const Neighbor& nb : m_.neighbors(i))
                if (is_metal(nb.atom)) {
                    ++taken_[at(out_.centre_of_atom[at(nb.atom)])];
                    break;
                }
        }
    }

    // A donor on plain bonds to metals: the electrons that close its shell, shared as covalent units among its metals.
    void count_donor(int i) {
        const Atom& a = m_.atoms[at(i)];
        const ElementData& el = element(a.z);
        std::vector<Neighbor> metal_bonds;
        int k = 0;
        for (const Neighbor& nb : m_.neighbors(i))
            if (is_metal(nb.atom)) {
                metal_bonds.push_back(nb);
                k += m_.bonds[at(nb.bond)].order;
            }
        if (metal_bonds.empty()) return;
        const int s = nonmetal_order_sum(i);
        const int n0 = el.valence_electrons - a.charge - s;
        int t = 0;
        if (el.period == 1) {
            t = 2 - 2 * s - n0;
        } else {
            t = 8 - 2 * s - n0;
            if (t < 0 && el.period >= 3) t = (n0 % 2 == 0) ? 0 : 1;  // expanded octet kept as written
        }
        if (t < 0) {
            int added = 0;  // hydrogens OpenSMILES gave it (its bond to the metal counted)
            for (const Neighbor& nb : m_.neighbors(i)) added += m_.atoms[at(nb.atom)].parent == i ? 1 : 0;
            throw InputError(
                fmt::format("atom {} ({}) has more electrons than its octet holds before its bond to a metal is "
                            "counted{}",
                            i + 1, el.symbol,
                            added > 0 ? fmt::format(": written without brackets it was given {} hydrogen{} (OpenSMILES "
                                                    "counts the metal bond); write it in brackets, e.g. [{}]",
                                                    added, added == 1 ? "" : "s", el.symbol)
                                      : std::string("; write its charge (the ligand as the free species)")),
                {}, a.column);
        }
        // A heteroatom-stabilised carbene donates its lone pair: nothing covalent on a single bond; on a written
        // double bond the two units are counted for the carbon's own domains but take nothing from the metal.
        const bool carbene = heteroatom_carbene(i);
        if (carbene && k == 1) t = 0;
        if (t > k) {
            out_.warnings.push_back(fmt::format(
                "atom {} ({}): its ligand is not closed-shell even with every bond to the metal counted as "
                "covalent; built as the radical it is written as",
                i + 1, el.symbol));
            t = k;
        }
        warn_unbracketed_donor(i, t, metal_bonds);
        // Electrons the ligand takes in the ionic model. A carbonyl written in the cumulated form, M=C=O, is the
        // neutral ligand CO (the same molecule as [M]-[C-]#[O+]): its two covalent units are counted for the
        // carbon's own domains but take nothing from the metal.
        int taken = carbene ? 0 : t;
        if (a.z == 6 && a.charge == 0 && metal_bonds.size() == 1 && k == 2 && m_.degree(i) == 2) {
            for (const Neighbor& nb : m_.neighbors(i)) {
                const Atom& o = m_.atoms[at(nb.atom)];
                if (!is_metal(nb.atom) && (o.z == 8 || o.z == 16) && o.charge == 0 && m_.degree(nb.atom) == 1 &&
                    m_.bonds[at(nb.bond)].order == 2)
                    taken = 0;
            }
        }
        share_units(i, metal_bonds, t, taken);
    }

    void warn_unbracketed_donor(int i, int t, const std::vector<Neighbor>& metal_bonds) {
        const Atom& a = m_.atoms[at(i)];
        const ElementData& el = element(a.z);
        // An organic-subset N, O, P or S written without brackets gets its hydrogens by OpenSMILES' valence rule,
        // which counts the bond to the metal: `N1CC[NH2][Pt]1` makes the first N an amido (NH-) ligand. Said,
        // since the neutral donor ([NH2], [OH2]) is the commoner intent.
        // Only where the metal bond changed the count: a multiple bond to the metal (oxo, imido) is an X2 ligand
        // as written; and the suggestion names the hydrogens the free ligand has (PMe3: [P], not [PH2]).
        bool single_to_metal = true;
        for (const Neighbor& nb : metal_bonds) single_to_metal = single_to_metal && m_.bonds[at(nb.bond)].order == 1;
        if (!a.bracket && a.charge == 0 && t > 0 && single_to_metal &&
            (a.z == 7 || a.z == 8 || a.z == 15 || a.z == 16)) {
            int given = std::max(0, a.hydrogens), heavy = 0;
            for (const Neighbor& nb : m_.neighbors(i)) {
                if (m_.atoms[at(nb.atom)].z == 1) ++given;
                else if (!is_metal(nb.atom)) heavy += m_.bonds[at(nb.bond)].order;
            }
            // OpenSMILES normal valences: N, P 3 (5); O 2; S 2 (4, 6).
            const std::vector<int> valences = a.z == 8 ? std::vector<int>{2}
                                              : a.z == 16 ? std::vector<int>{2, 4, 6}
                                                          : std::vector<int>{3, 5};
            int free_h = -1;
            for (int v : valences)
                if (v >= heavy) {
                    free_h = v - heavy;
                    break;
                }
            // O and S with a heavy neighbour (alkoxide, carboxylate, thiolate) are read as the anion meant;
            // N and P (amine, phosphine) and bare O/S (water or hydroxide) are said.
            const bool chalcogen = a.z == 8 || a.z == 16;
            if (free_h >= 0 && free_h != given && !(chalcogen && heavy > 0))
                out_.warnings.push_back(fmt::format(
                    "atom {} ({}) is written without brackets, so its bond to the metal counts in its hydrogen "
                    "count (OpenSMILES) and it is read as an anionic ligand; for the neutral donor write [{}{}]",
                    i + 1, el.symbol, el.symbol,
                    free_h == 0 ? std::string() : free_h == 1 ? std::string("H") : fmt::format("H{}", free_h)));
        }
    }

    // Shares a donor's t covalent units (`taken` of them taking electrons from the metal) among its metal bonds.
    void share_units(int i, const std::vector<Neighbor>& metal_bonds, int t, int taken) {
        // Share the covalent units among the metals: each bond takes at most its order, the metal with the fewest
        // electrons taken so far first (bridging halides of a symmetric dimer go one to each metal).
        std::vector<int> units(metal_bonds.size(), 0);
        int left = t, left_taken = taken;
        while (left > 0) {
            int best = -1;
            for (size_t b = 0; b < metal_bonds.size(); ++b) {
                if (units[b] >= m_.bonds[at(metal_bonds[b].bond)].order) continue;
                const int cb = out_.centre_of_atom[at(metal_bonds[b].atom)];
                if (best < 0 || taken_[at(cb)] < taken_[at(out_.centre_of_atom[at(metal_bonds[at(best)].atom)])])
                    best = static_cast<int>(b);
            }
            if (best < 0) break;
            ++units[at(best)];
            --left;
            if (left_taken > 0) {
                ++taken_[at(out_.centre_of_atom[at(metal_bonds[at(best)].atom)])];
                --left_taken;
            }
        }
        for (size_t b = 0; b < metal_bonds.size(); ++b) {
            MetalBond mb;
            mb.donor = i;
            mb.metal = metal_bonds[b].atom;
            mb.covalent = units[b];
            mb.taken = units[b];
            out_.bonds.push_back(mb);
        }
    }

    // Oxidation state and d count of every centre from the electrons its ligands took.
    void set_oxidation_states() {
        for (size_t k = 0; k < out_.centres.size(); ++k) {
            MetalCentre& c = out_.centres[k];
            const Atom& a = m_.atoms[at(c.atom)];
            const ElementData& el = element(a.z);
            c.oxidation_state = a.charge + taken_[k];
            c.d_electrons = el.group - c.oxidation_state;
            // Beyond ten, the electrons of bonds to other metals (a group-11 metal(0) bonded to another: Cu-Cu, as
            // the s electron of Cu2 does).
            if (c.d_electrons > 10 && c.d_electrons - 10 <= c.metal_metal_bonds) c.d_electrons = 10;
            if (c.d_electrons < 0)
                throw InputError(fmt::format("atom {} ({}): its ligands as written would take {} electrons, leaving "
                                             "oxidation state {:+d}, more than the {} valence electrons of a group-{} "
                                             "metal; check the ligands' charges",
                                             c.atom + 1, el.symbol, taken_[k], c.oxidation_state, el.group, el.group),
                                 {}, a.column);
            if (c.d_electrons > 10)
                throw InputError(fmt::format("atom {} ({}): oxidation state {:+d} would leave {} d electrons, more "
                                             "than a d shell holds; check the charges",
                                             c.atom + 1, el.symbol, c.oxidation_state, c.d_electrons),
                                 {}, a.column);
        }
    }

    bool all_strong(const MetalCentre& c) const {
        for (const LigandDomain& d : c.ligands)
            if (d.field < 2) return false;
        return !c.ligands.empty();
    }

    void choose_polyhedron(MetalCentre& c) {
        const int z = m_.atoms[at(c.atom)].z;
        const ElementData& el = element(z);
        const std::string who = metal_label(m_, c.atom, c.oxidation_state);
        const int d = c.d_electrons;
        for (const auto& [atom, name] : options_.polyhedra)
            if (atom == c.atom) {
                if (named_polyhedron(name, c.sites).empty())
                    throw InputError(fmt::format("atom {} ({}): the polyhedron \"{}\" does not have {} sites", c.atom + 1,
                                                 el.symbol, name, c.sites));
                c.polyhedron = name;
                c.square_planar = name == "square planar";
                c.polyhedron_reason = fmt::format("{} as asked", name);
                return;
            }
        bool hapto = false;
        for (const LigandDomain& l : c.ligands) hapto = hapto || l.hapto();
        // A written @SP/@TB/@OH mark asks for its polyhedron (OpenSMILES), where the centre has that many sigma
        // ligands.
        const Atom& atom = m_.atoms[at(c.atom)];
        const int marked = polyhedral_neighbor_count(atom.chiral_class);
        if (marked > 0) {
            if (!hapto && marked == c.sites && m_.degree(c.atom) == marked) {
                c.polyhedron = atom.chiral_class == ChiralClass::SP   ? "square planar"
                               : atom.chiral_class == ChiralClass::TB ? "trigonal bipyramidal"
                                                                      : "octahedral";
                c.square_planar = atom.chiral_class == ChiralClass::SP;
                c.polyhedron_reason = fmt::format("d{} {}: {} as its stereo mark says", d, who, c.polyhedron);
                return;
            }
            c.stereo_note = fmt::format("the @{}{} mark needs {} ligands bonded by sigma bonds; the centre has {} "
                                        "coordination sites: not applied",
                                        atom.chiral_class == ChiralClass::SP   ? "SP"
                                        : atom.chiral_class == ChiralClass::TB ? "TB"
                                                                               : "OH",
                                        atom.chiral_index, marked, c.sites);
            out_.warnings.push_back(fmt::format("stereo mark on atom {} not applied: {}", c.atom + 1, c.stereo_note));
        }
        switch (c.sites) {
            case 0: c.polyhedron = "single atom"; c.polyhedron_reason = "no ligands"; return;
            case 1: c.polyhedron = "terminal"; c.polyhedron_reason = "one ligand"; return;
            case 2: c.polyhedron = "linear"; break;
            case 3: c.polyhedron = "trigonal planar"; break;
            case 4: {
                // Four-coordinate d8: square planar for the heavier metals of groups 9-11 in those oxidation states
                // (Pd(II), Pt(II), Au(III), Rh(I), Ir(I)) and for Ni(II) with strong-field ligands ([Ni(CN)4]2-;
                // [NiCl4]2- is tetrahedral); four-coordinate d9 Cu(II) square planar (common practice; reference-
                // data.md: ligand field and d-count rules). d10 and the rest: tetrahedral (Kepert).
                const bool heavy_d8 = d == 8 && el.period >= 5 && el.group >= 9 && el.group <= 11;
                // Ni(II): square planar unless a weak-field donor (halide, O) is among its ligands ([NiCl4]2- and
                // NiCl2(PPh3)2 are tetrahedral; Ni(CN)4 2-, Ni(dmg)2 and nickel porphyrins square planar).
                bool weak = false;
                for (const LigandDomain& l : c.ligands) weak = weak || l.field == 0;
                const bool nickel = d == 8 && z == 28 && !weak;
                const bool copper = d == 9 && z == 29;
                // An eta2 ligand (an alkene, Zeise's anion) takes one site of the square like any donor.
                bool wide_hapto = false;
                for (const LigandDomain& l : c.ligands) wide_hapto = wide_hapto || l.sites > 2;
                if ((heavy_d8 || nickel || copper) && !wide_hapto) {
                    c.polyhedron = "square planar";
                    c.square_planar = true;
                    c.polyhedron_reason = fmt::format("d{} {}, four-coordinate{}: square planar", d, who,
                                                      nickel ? " without weak-field donors" : "");
                    return;
                }
                c.polyhedron = "tetrahedral";
                c.polyhedron_reason = fmt::format("d{} {}, four-coordinate: tetrahedral{}", d, who,
                                                  d == 8 && z == 28 ? " (d8 Ni(II) with weak-field ligands)" : "");
                return;
            }
            case 5:
                // One multiply bonded ligand (a vanadyl or molybdenyl oxo, an alkylidene, a multiple metal-metal
                // bond) leaves the site trans to it empty: a square pyramid with that ligand at the apex (common
                // practice: VO(acac)2, MoOCl4, Re2Cl8 2-, the ruthenium benzylidene metathesis catalysts).
                if ((multiple_ligand_count(c) == 1 || multiple_metal_bond(c)) && !hapto) {
                    c.polyhedron = "square pyramidal";
                    c.polyhedron_reason = fmt::format("d{} {}, five coordination sites with one multiple bond: square "
                                                      "pyramidal (the site trans to it left empty)",
                                                      d, who);
                    return;
                }
                c.polyhedron = "trigonal bipyramidal";
                break;
            case 6: c.polyhedron = "octahedral"; break;
            case 7: c.polyhedron = "pentagonal bipyramidal"; break;
            case 8: c.polyhedron = "square antiprismatic"; break;
            case 9: c.polyhedron = "tricapped trigonal prismatic"; break;
            default:
                if (c.sites > 12)
                    throw UnsupportedError(fmt::format("atom {} ({}) has {} coordination sites; at most 12 are supported",
                                                       c.atom + 1, el.symbol, c.sites));
                c.polyhedron = fmt::format("{} sites", c.sites);
        }
        c.polyhedron_reason = fmt::format("d{} {}, {} coordination site{}: {} (ligand repulsion)", d, who, c.sites,
                                          c.sites == 1 ? "" : "s", c.polyhedron);
        if (hapto) {
            int rings = 0;
            for (const LigandDomain& l : c.ligands) rings += l.sites == 3 ? 1 : 0;
            if (rings == 2 && c.coordination_number == 2) {
                c.polyhedron_reason += "; a sandwich of two rings";
                c.polyhedron = "sandwich";
            } else if (rings == 1) {
                c.polyhedron_reason += "; a piano stool (the ring takes three sites)";
                c.polyhedron = "piano stool";
            }
        }
    }

    // Unpaired electrons of one centre (see spin_reason for the rule applied).
    void choose_spin(MetalCentre& c) {
        const int z = m_.atoms[at(c.atom)].z;
        const ElementData& el = element(z);
        const int d = c.d_electrons;
        const std::string who = metal_label(m_, c.atom, c.oxidation_state);
        auto high_spin = [](int n) { return n <= 5 ? n : 10 - n; };
        // Low-spin octahedral t2g^x eg^y (common practice).
        auto low_spin_octahedral = [](int n) {
            static const int u[] = {0, 1, 2, 3, 2, 1, 0, 1, 2, 1, 0};
            return u[n];
        };
        int field_sum = 0, strong = 0;
        bool all_halide = true;
        for (const LigandDomain& l : c.ligands) {
            field_sum += l.field * l.sites;
            if (l.field == 2) strong += l.sites;
            if (l.hapto() || element(m_.atoms[at(l.atoms[0])].z).group != 17) all_halide = false;
        }
        if (c.square_planar) {
            c.unpaired_electrons = d == 8 ? 0 : d % 2;
            c.spin_reason = fmt::format("square-planar d{}: {}", d, d == 8 ? "low spin (singlet)" : "one unpaired electron");
            c.spin_state = d == 8 ? "low spin" : "";
        } else if (c.sites <= 4 && el.period >= 5 && d >= 2 && d <= 8) {
            // Second- and third-row metals are low spin in every polyhedron (large ligand-field splitting; common
            // practice): the electrons pair in the lowest orbitals, the distortion lifting any degeneracy.
            c.unpaired_electrons = d % 2;
            c.spin_state = "low spin";
            c.spin_reason = fmt::format("{}-coordinate d{}: {} unpaired (second- and third-row metals are low spin)",
                                        c.sites, d, c.unpaired_electrons);
        } else if (c.sites <= 4) {
            // Tetrahedral (and lower) fields are weak: high spin (common practice).
            c.unpaired_electrons = high_spin(d);
            c.spin_state = (d >= 3 && d <= 7) ? "high spin" : "";
            c.spin_reason = fmt::format("{}-coordinate d{}: {} unpaired (tetrahedral and lower fields are weak: high "
                                        "spin)",
                                        c.sites, d, c.unpaired_electrons);
        } else {
            const bool octahedral = c.sites == 6;
            const bool choice = octahedral ? (d >= 4 && d <= 7) : d >= 2;
            bool low = false;
            std::string why;
            if (el.period >= 5) {
                low = true;
                why = "second- and third-row metals are low spin";
            } else if (2 * strong >= c.sites) {
                low = true;
                why = "strong-field ligands (C, P, hydride, pi-acceptor N, hapto ligands) hold most sites";
            } else if (d == 6 && c.oxidation_state >= 3 && !all_halide) {
                low = true;
                why = "d6 with oxidation state +3 or more and N or O donors (Co(III)) is low spin";
            } else {
                why = "first-row metal with weak- or intermediate-field ligands: high spin";
            }
            if (!choice) {
                c.unpaired_electrons = octahedral ? low_spin_octahedral(d) : (d <= 1 ? d : (low ? d % 2 : high_spin(d)));
                c.spin_state = octahedral ? "" : (low ? "low spin" : "high spin");
                if (octahedral) why = "the d count leaves no choice";
            } else {
                // Low spin beyond the octahedron: pairs fill the lowest orbitals; in a pentagonal bipyramid those are
                // a degenerate pair (dxz, dyz), which two electrons occupy singly ([V(CN)7]4-, a triplet; common
                // practice), in the other polyhedra a single orbital ([Mo(CN)8]4-, diamagnetic).
                const int paired = c.sites == 7 ? (d == 2 ? 2 : d % 2) : d % 2;
                c.unpaired_electrons = low ? (octahedral ? low_spin_octahedral(d) : paired) : high_spin(d);
                c.spin_state = low ? "low spin" : "high spin";
            }
            c.spin_reason = fmt::format("{} d{}: {} unpaired ({})", who, d, c.unpaired_electrons, why);
            (void)field_sum;
        }
        if (c.metal_metal_bonds > 0) {
            const int before = c.unpaired_electrons;
            c.unpaired_electrons = std::max(0, c.unpaired_electrons - c.metal_metal_bonds);
            if (before != c.unpaired_electrons)
                c.spin_reason += fmt::format("; {} paired in the metal-metal bond", before - c.unpaired_electrons);
        }
        // Jahn-Teller distortion: octahedral d9 and high-spin d4.
        if (c.sites == 6 && c.coordination_number == 6 && (d == 9 || (d == 4 && c.spin_state == "high spin")))
            c.polyhedron_reason += fmt::format("; d{}{}: Jahn-Teller elongated along one axis", d,
                                               d == 4 ? " high spin" : "");
    }

    // Ligands bonded to the metal by a multiple bond and to nothing else (oxo, nitrido, imido's N is not terminal).
    int terminal_multiple_count(const MetalCentre& c) const {
        int n = 0;
        for (const LigandDomain& l : c.ligands)
            if (!l.hapto() && l.bond_order >= 2 && !is_metal(l.atoms[0]) && m_.degree(l.atoms[0]) == 1) ++n;
        return n;
    }

    // A true multiple bond to a ligand: a terminal oxo or nitrido, or an alkylidene (a carbon double-bonded to the
    // metal that is neither a heteroatom-stabilised carbene nor the cumulated form of a carbonyl).
    bool multiple_ligand(const LigandDomain& l) const {
        if (l.hapto() || l.bond_order < 2 || is_metal(l.atoms[0])) return false;
        const int donor = l.atoms[0];
        if (m_.degree(donor) == 1) return true;
        if (m_.atoms[at(donor)].z != 6 || heteroatom_carbene(donor)) return false;
        for (const Neighbor& nb : m_.neighbors(donor))
            if (!is_metal(nb.atom) && m_.bonds[at(nb.bond)].order >= 2) return false;  // M=C=O, M=C=C
        return true;
    }
    int multiple_ligand_count(const MetalCentre& c) const {
        int n = 0;
        for (const LigandDomain& l : c.ligands) n += multiple_ligand(l) ? 1 : 0;
        return n;
    }

    // A multiple bond to another metal (the quadruple bond of Re2Cl8 2-).
    bool multiple_metal_bond(const MetalCentre& c) const {
        for (const LigandDomain& l : c.ligands)
            if (!l.hapto() && is_metal(l.atoms[0]) && l.bond_order >= 2) return true;
        return false;
    }

    void set_lengths(MetalCentre& c) {
        const int z = m_.atoms[at(c.atom)].z;
        for (LigandDomain& l : c.ligands) {
            MetalLigandBond b;
            b.metal_z = z;
            b.oxidation_state = c.oxidation_state;
            b.d_electrons = c.d_electrons;
            b.coordination_number = c.coordination_number;
            b.high_spin = c.spin_state == "high spin";
            b.square_planar = c.square_planar;
            b.donor_z = m_.atoms[at(l.atoms[0])].z;
            b.order = l.bond_order;
            b.hapto = l.hapto() ? static_cast<int>(l.atoms.size()) : 0;
            b.donor_charge = m_.atoms[at(l.atoms[0])].charge;
            b.carbene_donor = !l.hapto() && heteroatom_carbene(l.atoms[0]);
            b.valence_electrons = c.d_electrons + 2 * c.sites;
            b.yl = !l.hapto() && l.bond_order >= 2 && terminal_multiple_count(c) == 1 && c.coordination_number >= 5 &&
                   m_.degree(l.atoms[0]) == 1;
            if (!l.hapto()) {
                const int donor = l.atoms[0];
                b.donor_degree = 0;
                for (const Neighbor& nb : m_.neighbors(donor))
                    if (!is_metal(nb.atom)) {
                        ++b.donor_degree;
                        b.donor_partner_z = m_.atoms[at(nb.atom)].z;
                        const Bond& bond = m_.bonds[at(nb.bond)];
                        b.donor_multiple = b.donor_multiple || bond.order >= 2 || bond.aromatic;
                    }
                const MetalBond* mb = out_.bond(donor, c.atom);
                b.covalent = mb != nullptr ? mb->taken : 0;
            }
            if (!l.hapto() && is_metal(l.atoms[0])) {
                l.length = metal_metal_length(z, m_.atoms[at(l.atoms[0])].z, l.bond_order);
                continue;
            }
            l.length = metal_ligand_length(b);
        }
    }

    bool jahn_teller(const MetalCentre& c) const {
        return c.sites == 6 && c.coordination_number == 6 &&
               (c.d_electrons == 9 || (c.d_electrons == 4 && c.spin_state == "high spin"));
    }

    void place_ligands(MetalCentre& c) {
        const int nl = static_cast<int>(c.ligands.size());
        if (nl == 0) return;
        std::vector<Vector3d> sites;
        // Each ligand's sites, in order (a hapto ligand's sites follow each other).
        std::vector<int> site_owner;
        for (int l = 0; l < nl; ++l)
            for (int s = 0; s < c.ligands[at(l)].sites; ++s) site_owner.push_back(l);
        const std::vector<Vector3d> named = named_polyhedron(c.polyhedron, c.sites);
        if (c.polyhedron_reason.ends_with("stereo mark says")) {
            std::string problem;
            if (auto dirs = marked_directions(m_, c.atom, &problem)) {
                // Sigma ligands are in neighbour order, as the mark's directions.
                c.directions = *dirs;
                c.stereo_note = fmt::format("ligands placed as the stereo mark says (OpenSMILES)");
                if (jahn_teller(c)) elongate(c);
                if (c.square_planar) trans_influence(c);
                return;
            }
            c.stereo_note = "mark not applied: " + problem;
            out_.warnings.push_back(fmt::format("stereo mark on atom {} not applied: {}", c.atom + 1, problem));
        }
        if (!named.empty() && !c.polyhedron_reason.ends_with("as asked") && c.sites <= 3) {
            sites = named;
        } else if (!named.empty() && c.polyhedron_reason.ends_with("as asked")) {
            sites = named;
        } else if (c.polyhedron == "square pyramidal" && c.sites == 5) {
            sites = square_pyramid_sites(c, site_owner, named);
        } else if (c.sites == 1) {
            sites = {Vector3d::UnitZ()};
        } else {
            sites = kepert_sites(c, site_owner);
        }
        std::vector<Vector3d> dirs = directions_on_sites(c, sites, site_owner);
        if (bent_metallocene(c)) {
            dirs = bent_metallocene_directions(c);
            c.polyhedron_reason += "; a bent metallocene (each ring one large domain, the sigma ligands between them)";
        }
        c.directions = dirs;
        if (jahn_teller(c)) elongate(c);
        if (c.square_planar) trans_influence(c);
    }

    // A square pyramid with its multiply bonded ligand at the apex, like donors trans round the base.
    std::vector<Vector3d> square_pyramid_sites(const MetalCentre& c, const std::vector<int>& site_owner,
                                               const std::vector<Vector3d>& named) const {
        std::vector<Vector3d> sites;
        // The multiply bonded ligand at the apex of the square pyramid (apex-base angle 104 degrees, near
        // VO(acac)2's O=V-O and Re2Cl8 2-'s Re-Re-Cl, from memory), the others round the base.
        size_t apex_owner = 0;
        for (size_t s = 0; s < site_owner.size(); ++s)
            if (multiple_ligand(c.ligands[at(site_owner[s])]) ||
                (is_metal(c.ligands[at(site_owner[s])].atoms[0]) && c.ligands[at(site_owner[s])].bond_order >= 2)) {
                apex_owner = s;
                break;
            }
        sites.assign(site_owner.size(), Vector3d::Zero());
        // Round the base, like donors trans to each other where the order allows (the two chlorides and the two
        // neutral donors of the benzylidene catalysts are trans; chelates are put cis afterwards).
        std::vector<size_t> basal;
        for (size_t s = 0; s < site_owner.size(); ++s)
            if (s != apex_owner) basal.push_back(s);
        std::vector<size_t> perm = {1, 2, 3, 4}, best_perm = perm;
        auto like = [&](size_t a, size_t b) {
            const LigandDomain& la = c.ligands[at(site_owner[a])];
            const LigandDomain& lb = c.ligands[at(site_owner[b])];
            return m_.atoms[at(la.atoms[0])].z == m_.atoms[at(lb.atoms[0])].z && la.bond_order == lb.bond_order;
        };
        auto score = [&](const std::vector<size_t>& p) {
            int n = 0;
            for (size_t i = 0; i < basal.size() && i < p.size(); ++i)
                for (size_t j = i + 1; j < basal.size() && j < p.size(); ++j)
                    if (named[p[i]].dot(named[p[j]]) < -0.5 && like(basal[i], basal[j])) ++n;
            return n;
        };
        int best_score = score(perm);
        while (basal.size() == 4 && std::next_permutation(perm.begin(), perm.end()))
            if (const int sc = score(perm); sc > best_score) best_score = sc, best_perm = perm;
        size_t k = 0;
        for (size_t s = 0; s < site_owner.size(); ++s) sites[s] = s == apex_owner ? named[0] : named[best_perm[k++]];
        return sites;
    }

    // The Kepert arrangement of the centre's sites, solved on the sphere.
    std::vector<Vector3d> kepert_sites(const MetalCentre& c, const std::vector<int>& site_owner) const {
        // Kepert: donors on spheres of their own bond lengths; square-planar centres as four bonding domains and
        // two lone-pair-like domains of the arrangement stage (AX4E2 is square planar there).
        double longest = 0;
        for (const LigandDomain& l : c.ligands) longest = std::max(longest, l.length);
        std::vector<SphereDomain> fitted, arrangement;
        for (int s : site_owner) {
            const LigandDomain& l = c.ligands[at(s)];
            const double r = l.length > 0 && longest > 0 ? l.length / longest : 1.0;
            // A hydride takes little room: the ligands cis to it lean towards it (HCo(CO)4, HMn(CO)5; common
            // practice).
            const bool hydride = !l.hapto() && m_.atoms[at(l.atoms[0])].z == 1;
            fitted.push_back({hydride ? kHydrideWeight : 1.0, r, kKepertExponent});
            arrangement.push_back(arrangement_domain(DomainKind::bond));
        }
        // The two empty sites of a square-planar centre as lone-pair-like domains of the arrangement stage.
        const int empty = c.square_planar ? 2 : 0;
        for (int k = 0; k < empty; ++k) {
            fitted.push_back(arrangement_domain(DomainKind::lone_pair));
            arrangement.push_back(arrangement_domain(DomainKind::lone_pair));
        }
        std::vector<Vector3d> solved = solve_sphere_staged(arrangement, fitted);
        solved.resize(site_owner.size());
        return solved;
    }

    // Each ligand's direction on the sites: hapto ligands on the closest free sites, sigma donors on their own.
    std::vector<Vector3d> directions_on_sites(MetalCentre& c, const std::vector<Vector3d>& sites,
                                              const std::vector<int>& site_owner) {
        const int nl = static_cast<int>(c.ligands.size());
        // Hapto ligands on the closest free sites, then sigma donors on their own solved site where free.
        std::vector<char> taken(sites.size(), 0);
        std::vector<Vector3d> dirs(at(nl), Vector3d::Zero());
        std::vector<int> order(at(nl));
        std::iota(order.begin(), order.end(), 0);
        std::stable_sort(order.begin(), order.end(),
                         [&](int a, int b) { return c.ligands[at(a)].sites > c.ligands[at(b)].sites; });
        for (int l : order) {
            const LigandDomain& lig = c.ligands[at(l)];
            if (!lig.hapto()) continue;
            const std::vector<int> set = closest_sites(sites, taken, lig.sites);
            Vector3d sum = Vector3d::Zero();
            for (int s : set) {
                taken[at(s)] = 1;
                sum += sites[at(s)];
            }
            dirs[at(l)] = sum.norm() > 1e-9 ? sum.normalized() : Vector3d::UnitZ();
        }
        // Sigma donors: each on its own solved site, except that the two donors of a chelate must be cis (the
        // repulsion solve does not know the ring that joins them): then the assignment of donors to free sites with
        // the smallest sum of chelate angles, moving as few donors as possible from their solved sites.
        std::vector<int> sigma;
        std::vector<size_t> own_site;
        for (int l = 0; l < nl; ++l) {
            if (c.ligands[at(l)].hapto()) continue;
            sigma.push_back(l);
            size_t own = sites.size();
            for (size_t s = 0; s < site_owner.size(); ++s)
                if (site_owner[s] == l) own = s;
            own_site.push_back(own);
        }
        std::vector<size_t> free_sites;
        for (size_t s = 0; s < sites.size(); ++s)
            if (!taken[s]) free_sites.push_back(s);
        const std::vector<size_t> chosen = assign_sigma_sites(c, sigma, own_site, free_sites, sites);
        for (size_t k = 0; k < sigma.size() && k < chosen.size(); ++k) dirs[at(sigma[k])] = sites[chosen[k]];
        return dirs;
    }

    // A bent metallocene (two rings of three sites each and one to three sigma ligands: Cp2TiCl2, Cp2ZrCl2, Cp2WH2,
    // Cp2NbCl3): each ring as a single domain of large weight, the sigma ligands in the wedge between them. Three
    // sites per ring of a square antiprism open the rings to 147 degrees; the crystals have 129-131 (below).
    static constexpr double kRingWeight = 4.0;
    bool bent_metallocene(const MetalCentre& c) const {
        if (c.polyhedron_reason.ends_with("as asked")) return false;
        int rings = 0, sigma = 0;
        for (const LigandDomain& l : c.ligands) {
            if (l.hapto() && l.sites == 3) ++rings;
            else if (!l.hapto()) ++sigma;
            else return false;
        }
        return rings == 2 && sigma >= 1 && sigma <= 3 && c.metal_metal_bonds == 0;
    }
    // The weight is fitted on the ring centroid-metal-ring centroid angles of Cp2TiCl2 (131.0) and Cp2ZrCl2 (128.8;
    // crystal structures, Prout, Cameron, Forder, Critchley, Denton and Rees, Acta Cryst. B30 (1974) 2290, from
    // memory): 127.5 and 127.3 here; the X-M-X angle follows (94.4 and 97.1 there, 93.3 and 93.5 here).
    std::vector<Vector3d> bent_metallocene_directions(const MetalCentre& c) const {
        double longest = 0;
        for (const LigandDomain& l : c.ligands) longest = std::max(longest, l.length);
        std::vector<SphereDomain> domains;
        for (const LigandDomain& l : c.ligands) {
            const double r = l.length > 0 && longest > 0 ? l.length / longest : 1.0;
            const bool hydride = !l.hapto() && m_.atoms[at(l.atoms[0])].z == 1;
            domains.push_back({l.hapto() ? kRingWeight : hydride ? kHydrideWeight : 1.0, r, kKepertExponent});
        }
        return solve_sphere(domains);
    }

    // Trans influence in a square plane: a weak-field donor (halide, O, sp3 N) trans to a ligand of high trans
    // influence (hydride, a sigma-bonded carbon other than CO and CN-, P, As, an alkene) is longer (common practice:
    // Zeise's anion Pt-Cl 2.34 A trans to the alkene against 2.30 cis, from memory).
    static constexpr double kTransInfluence = 0.05;
    bool strong_trans(const LigandDomain& l) const {
        if (l.hapto()) return l.atoms.size() == 2;
        const int donor = l.atoms[0];
        const int z = m_.atoms[at(donor)].z;
        if (z == 1 || z == 15 || z == 33) return true;
        if (z != 6) return false;
        for (const Neighbor& nb : m_.neighbors(donor))
            if (!is_metal(nb.atom) && m_.bonds[at(nb.bond)].order == 3) return false;  // CO, CN-
        return true;
    }
    void trans_influence(MetalCentre& c) {
        const size_t n = c.ligands.size();
        std::vector<double> add(n, 0.0);
        for (size_t a = 0; a < n; ++a) {
            if (c.ligands[a].hapto() || c.ligands[a].field > 1) continue;
            for (size_t b = 0; b < n; ++b)
                if (b != a && c.directions[a].dot(c.directions[b]) < -0.9 && strong_trans(c.ligands[b]))
                    add[a] = kTransInfluence;
        }
        for (size_t a = 0; a < n; ++a) c.ligands[a].length += add[a];
    }

    // Donor pairs of one chelate: joined by a path of at most kChelatePath bonds that avoids the metal (a chelate
    // ring of up to six atoms with the metal: ethylenediamine, bipyridine, oxalate, acetylacetonate, the adjacent
    // nitrogens of a porphyrin).
    static constexpr int kChelatePath = 4;
    bool chelate_pair(int metal, int a, int b) const {
        std::vector<int> depth(at(m_.atom_count()), -1);
        std::vector<int> queue{a};
        depth[at(a)] = 0;
        for (size_t head = 0; head < queue.size(); ++head) {
            const int u = queue[head];
            if (u == b) return true;
            if (depth[at(u)] >= kChelatePath) continue;
            for (const Neighbor& nb : m_.neighbors(u)) {
                if (nb.atom == metal || depth[at(nb.atom)] >= 0 || is_metal(nb.atom)) continue;
                depth[at(nb.atom)] = depth[at(u)] + 1;
                queue.push_back(nb.atom);
            }
        }
        return false;
    }

    std::vector<size_t> assign_sigma_sites(const MetalCentre& c, const std::vector<int>& sigma,
                                           const std::vector<size_t>& own_site, const std::vector<size_t>& free_sites,
                                           const std::vector<Vector3d>& sites) const {
        const size_t n = sigma.size();
        std::vector<std::pair<size_t, size_t>> pairs;
        for (size_t p = 0; p < n; ++p)
            for (size_t q = p + 1; q < n; ++q)
                if (chelate_pair(c.atom, c.ligands[at(sigma[p])].atoms[0], c.ligands[at(sigma[q])].atoms[0]))
                    pairs.emplace_back(p, q);
        std::vector<size_t> plain(n);
        {
            std::vector<char> used(sites.size(), 1);
            for (size_t s : free_sites) used[s] = 0;
            for (size_t k = 0; k < n; ++k) {
                size_t s = own_site[k];
                if (s >= sites.size() || used[s]) {
                    s = sites.size();
                    for (size_t f : free_sites)
                        if (!used[f]) {
                            s = f;
                            break;
                        }
                }
                plain[k] = s;
                if (s < sites.size()) used[s] = 1;
            }
        }
        if (pairs.empty() || free_sites.size() < n) return plain;
        // A node budget keeps the search bounded whatever the input (12 donors with chelates everywhere): past it the
        // best assignment found so far is kept (the solve's own one at worst).
        constexpr long kNodeBudget = 200000;
        long nodes = 0;
        // Branch and bound over assignments (at most 9 donors): cost = sum of chelate angles (radians) + a small
        // price per donor moved off its solved site; the solve's own assignment bounds the search from the start.
        constexpr double kMovePrice = 1e-3;
        auto angle = [&](size_t s, size_t t) { return std::acos(std::clamp(sites[s].dot(sites[t]), -1.0, 1.0)); };
        // Two donors of strong trans influence (sigma carbon, hydride, P, As) avoid being trans to each other: among
        // assignments of equal chelate angles, the one with fewer such pairs (fac-Ir(ppy)3, the isomer made and
        // used, has each C trans to N; mer puts two C trans; common practice).
        constexpr double kTransPairPrice = 0.05;
        std::vector<char> strong(n, 0);
        for (size_t k = 0; k < n; ++k) strong[k] = strong_trans(c.ligands[at(sigma[k])]) ? 1 : 0;
        auto trans_price = [&](size_t p, size_t sp, size_t q, size_t sq) {
            return strong[p] && strong[q] && sites[sp].dot(sites[sq]) < -0.8 ? kTransPairPrice : 0.0;
        };
        std::vector<size_t> current(n), best = plain;
        double best_cost = 0;
        for (const auto& [p, q] : pairs) best_cost += angle(plain[p], plain[q]);
        for (size_t p = 0; p < n; ++p)
            for (size_t q = p + 1; q < n; ++q)
                if (plain[p] < sites.size() && plain[q] < sites.size()) best_cost += trans_price(p, plain[p], q, plain[q]);
        for (size_t k = 0; k < n; ++k) best_cost += plain[k] != own_site[k] ? kMovePrice : 0;
        std::vector<char> used(sites.size(), 0);
        // Explicit stack: (donor index, next free-site index to try, cost so far).
        struct Frame {
            size_t donor, next;
            double cost;
        };
        std::vector<Frame> stack{{0, 0, 0.0}};
        while (!stack.empty() && ++nodes < kNodeBudget) {
            Frame& f = stack.back();
            if (f.donor == n) {
                if (f.cost < best_cost - 1e-12) best_cost = f.cost, best = current;
                stack.pop_back();
                if (!stack.empty()) used[current[stack.back().donor]] = 0;
                continue;
            }
            if (f.next >= free_sites.size()) {
                stack.pop_back();
                if (!stack.empty()) used[current[stack.back().donor]] = 0;
                continue;
            }
            const size_t s = free_sites[f.next++];
            if (used[s]) continue;
            double cost = f.cost + (s != own_site[f.donor] ? kMovePrice : 0);
            for (const auto& [p, q] : pairs)
                if (q == f.donor) cost += angle(current[p], s);
            for (size_t p = 0; p < f.donor; ++p) cost += trans_price(p, current[p], f.donor, s);
            if (cost >= best_cost - 1e-12) continue;
            current[f.donor] = s;
            used[s] = 1;
            stack.push_back({f.donor + 1, 0, cost});
        }
        return best;
    }

    // The Jahn-Teller axis: the trans pair with the longest bonds (the weakest donors), the lower indices on a tie.
    void elongate(MetalCentre& c) {
        const int nl = static_cast<int>(c.ligands.size());
        int best_a = -1, best_b = -1;
        double best = -1;
        for (int a = 0; a < nl; ++a)
            for (int b = a + 1; b < nl; ++b) {
                if (c.directions[at(a)].dot(c.directions[at(b)]) > -0.9) continue;
                const double sum = c.ligands[at(a)].length + c.ligands[at(b)].length;
                if (sum > best + 1e-9) best = sum, best_a = a, best_b = b;
            }
        if (best_a < 0) return;
        for (int l = 0; l < nl; ++l)
            c.ligands[at(l)].length += (l == best_a || l == best_b) ? kJahnTellerAxial : kJahnTellerEquatorial;
    }
};

}  // namespace

const MetalBond* MetalAnalysis::bond(int donor, int metal) const {
    // bonds are in donor order (count_electrons walks the atoms in order): a binary search, then the few of that donor.
    auto it = std::lower_bound(bonds.begin(), bonds.end(), donor,
                               [](const MetalBond& b, int d) { return b.donor < d; });
    for (; it != bonds.end() && it->donor == donor; ++it)
        if (it->metal == metal) return &*it;
    return nullptr;
}

MetalAnalysis analyse_metals(const Molecule& molecule, bool solve, const MetalOptions& options) {
    return MetalAnalyser(molecule, solve, options).run();
}

Molecule without_hapto_bonds(const Molecule& molecule, const MetalAnalysis& metals) {
    if (metals.hapto_bonds.empty()) return molecule;
    Molecule out = molecule;
    std::vector<char> drop(molecule.bonds.size(), 0);
    for (const auto& [metal, atom] : metals.hapto_bonds) {
        const int b = molecule.bond_between(metal, atom);
        if (b >= 0) drop[at(b)] = 1;
    }
    std::vector<Bond> kept;
    kept.reserve(molecule.bonds.size());
    for (size_t b = 0; b < molecule.bonds.size(); ++b)
        if (!drop[b]) kept.push_back(molecule.bonds[b]);
    out.set_bonds(std::move(kept));
    return out;
}

namespace {

// The five ring atoms of a cyclopentadienide ring through the carbanion a, or empty.
std::vector<int> cyclopentadienide_ring(const Molecule& m, int a) {
    auto carbon = [&](int i) { return m.atoms[at(i)].z == 6; };
    const auto& na = m.neighbors(a);
    for (size_t p = 0; p < na.size(); ++p)
        for (size_t q = p + 1; q < na.size(); ++q) {
            const int b = na[p].atom, e = na[q].atom;
            if (!carbon(b) || !carbon(e)) continue;
            for (const Neighbor& x : m.neighbors(b)) {
                if (x.atom == a || !carbon(x.atom)) continue;
                for (const Neighbor& y : m.neighbors(x.atom)) {
                    if (y.atom == b || y.atom == a || !carbon(y.atom) || m.bond_between(y.atom, e) < 0 || y.atom == e)
                        continue;
                    std::vector<int> ring{a, b, x.atom, y.atom, e};
                    int charge = 0;
                    bool trigonal = true;
                    for (int r : ring) {
                        charge += m.atoms[at(r)].charge;
                        if (r == a) continue;
                        bool pi = m.atoms[at(r)].aromatic;
                        for (const Neighbor& nb : m.neighbors(r)) pi = pi || m.bonds[at(nb.bond)].order == 2;
                        trigonal = trigonal && pi;
                    }
                    if (charge == -1 && trigonal) {
                        std::sort(ring.begin(), ring.end());
                        return ring;
                    }
                }
            }
        }
    return {};
}

}  // namespace

int join_separated_sandwich_ions(Molecule& m, std::vector<std::string>& warnings) {
    bool any_metal = false;
    for (const Atom& a : m.atoms) any_metal = any_metal || is_d_block_metal(a.z);
    if (!any_metal) return 0;
    int count = 0;
    const std::vector<int> comp = m.components(&count);
    std::vector<int> comp_size(at(count), 0);
    std::vector<char> comp_has_metal(at(count), 0);
    for (int i = 0; i < m.atom_count(); ++i) {
        ++comp_size[at(comp[at(i)])];
        if (is_transition_metal(m.atoms[at(i)].z)) comp_has_metal[at(comp[at(i)])] = 1;
    }
    // Rings, one per component, in the order written.
    std::vector<std::vector<int>> rings;
    std::vector<char> comp_taken(at(count), 0);
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[at(i)];
        if (a.z != 6 || a.charge != -1 || comp_has_metal[at(comp[at(i)])] || comp_taken[at(comp[at(i)])]) continue;
        std::vector<int> ring = cyclopentadienide_ring(m, i);
        if (ring.empty()) continue;
        comp_taken[at(comp[at(i)])] = 1;
        rings.push_back(std::move(ring));
    }
    int joined = 0;
    size_t next = 0;
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[at(i)];
        if (!is_d_block_metal(a.z)) continue;
        const bool lone = comp_size[at(comp[at(i)])] == 1;
        if (!lone && a.charge < 1) continue;
        const int take = std::min(2, a.charge);
        int took = 0;
        while (took < take && next < rings.size()) {
            for (int r : rings[next]) m.add_bond(i, r, 1);
            ++next;
            ++took;
        }
        if (took > 0) {
            joined += took;
            warnings.push_back(fmt::format(
                "atom {} ({}{:+d}) and {} cyclopentadienide ring{} written as separate ions: built as the {} they "
                "form (each ring bonded to the metal through all five atoms)",
                i + 1, element(a.z).symbol, a.charge, took, took == 1 ? "" : "s",
                took == 2 ? "sandwich compound" : "half-sandwich"));
        } else if (lone) {
            warnings.push_back(fmt::format(
                "atom {} ({}) is a lone metal ion with no bonds; it is built apart from the other components (write "
                "its bonds to the ligand atoms for a complex)",
                i + 1, element(a.z).symbol));
        }
    }
    return joined;
}

const std::vector<std::string>& polyhedron_names() {
    static const std::vector<std::string> names{"linear", "trigonal planar", "T-shaped", "tetrahedral",
                                                "square planar", "seesaw", "trigonal bipyramidal", "square pyramidal",
                                                "octahedral", "trigonal prismatic", "pentagonal bipyramidal",
                                                "square antiprismatic", "cubic"};
    return names;
}

}  // namespace repel
