#include "domains/domains.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "core/error.hpp"
#include "domains/model.hpp"
#include "graph/conjugation.hpp"
#include "graph/valence.hpp"
#include "sphere/sphere.hpp"

namespace repel {
namespace {

std::string atom_label(const Molecule& m, int i) {
    const Atom& a = m.atoms[static_cast<size_t>(i)];
    std::string label = fmt::format("atom {} ({}", i + 1, element(a.z).symbol);
    if (a.charge > 0) label += fmt::format("{}+", a.charge == 1 ? std::string() : std::to_string(a.charge));
    if (a.charge < 0) label += fmt::format("{}-", a.charge == -1 ? std::string() : std::to_string(-a.charge));
    return label + ")";
}

// The bond orders a centre's domains feel. One Lewis structure draws equivalent bonds unequally; the molecule does
// not (common practice: resonance). Aromatic bonds count 1.5; terminal atoms of one element on one centre whose
// written orders differ (the oxygens of sulfate, nitrate, carboxylate, phosphate) share the mean order.
std::vector<double> effective_orders(const Molecule& m, int centre) {
    const auto& nbs = m.neighbors(centre);
    std::vector<double> orders(nbs.size());
    for (size_t k = 0; k < nbs.size(); ++k) {
        const Bond& b = m.bonds[static_cast<size_t>(nbs[k].bond)];
        orders[k] = b.aromatic ? 1.5 : b.order;
    }
    for (size_t k = 0; k < nbs.size(); ++k) {
        const int zk = m.atoms[static_cast<size_t>(nbs[k].atom)].z;
        if (m.degree(nbs[k].atom) != 1 || m.atoms[static_cast<size_t>(nbs[k].atom)].hydrogens > 0) continue;
        double sum = 0;
        int count = 0;
        bool differ = false;
        for (size_t j = 0; j < nbs.size(); ++j) {
            const Atom& aj = m.atoms[static_cast<size_t>(nbs[j].atom)];
            if (aj.z != zk || m.degree(nbs[j].atom) != 1 || aj.hydrogens > 0) continue;
            const int oj = m.bonds[static_cast<size_t>(nbs[j].bond)].order;
            differ = differ || oj != m.bonds[static_cast<size_t>(nbs[k].bond)].order;
            sum += oj;
            ++count;
        }
        if (differ) orders[k] = sum / count;
    }
    return orders;
}

// The bond orders that set bond lengths. Aromatic bonds 1.5. On one centre, terminal atoms without hydrogens whose
// written orders differ share the mean order when they are of one element (ozone, nitro, carboxylate, sulfate), or
// when the one of lower order carries a negative formal charge (N2O, N#[N+][O-]: N-N and N-O both 2, as in its
// resonance structure N=[N+]=O with the charges moved; azide alike): one Lewis structure of several draws equivalent
// or nearly equivalent bonds unequally, the molecule does not (common practice: resonance). Kept apart from
// effective_orders(), whose values the fitted domain model was fitted with.
std::vector<double> length_orders(const Molecule& m) {
    std::vector<double> orders(m.bonds.size());
    for (size_t e = 0; e < m.bonds.size(); ++e) orders[e] = m.bonds[e].aromatic ? 1.5 : m.bonds[e].order;
    for (int centre = 0; centre < m.atom_count(); ++centre) {
        std::vector<Neighbor> terminal;
        for (const Neighbor& nb : m.neighbors(centre)) {
            const Atom& t = m.atoms[static_cast<size_t>(nb.atom)];
            if (m.degree(nb.atom) == 1 && t.hydrogens <= 0 && !m.bonds[static_cast<size_t>(nb.bond)].aromatic)
                terminal.push_back(nb);
        }
        if (terminal.size() < 2) continue;
        auto z = [&](const Neighbor& nb) { return m.atoms[static_cast<size_t>(nb.atom)].z; };
        auto order = [&](const Neighbor& nb) { return m.bonds[static_cast<size_t>(nb.bond)].order; };
        // One element: the mean over the terminal atoms of that element.
        bool shared = false;
        for (const Neighbor& t : terminal) {
            double sum = 0;
            int count = 0;
            bool differ = false;
            for (const Neighbor& u : terminal)
                if (z(u) == z(t)) {
                    sum += order(u);
                    ++count;
                    differ = differ || order(u) != order(t);
                }
            if (differ) {
                orders[static_cast<size_t>(t.bond)] = sum / count;
                shared = true;
            }
        }
        if (shared) continue;
        // Different elements: a negatively charged terminal atom and the terminal atom of the highest order above it.
        const Neighbor* low = nullptr;
        const Neighbor* high = nullptr;
        for (const Neighbor& t : terminal) {
            if (m.atoms[static_cast<size_t>(t.atom)].charge < 0 && (low == nullptr || order(t) < order(*low))) low = &t;
            if (high == nullptr || order(t) > order(*high)) high = &t;
        }
        if (low != nullptr && high != nullptr && order(*high) > order(*low)) {
            const double mean = 0.5 * (order(*high) + order(*low));
            orders[static_cast<size_t>(low->bond)] = mean;
            orders[static_cast<size_t>(high->bond)] = mean;
        }
    }
    // Amidinium and guanidinium: a carbon's C=[N+] and its C-N single bonds to three-coordinate neutral N share the
    // charge and one pi bond (common practice: resonance; both C-N of acetamidinium about 1.31 A in GFN2-xTB optima):
    // the mean order, 1.5 for two N, 4/3 for three. One Lewis structure drew them unequal.
    for (int c = 0; c < m.atom_count(); ++c) {
        const Atom& ac = m.atoms[static_cast<size_t>(c)];
        if (ac.z != 6 || ac.aromatic || ac.charge != 0) continue;
        auto three_coordinate = [&](int a) {
            return m.degree(a) + std::max(0, m.atoms[static_cast<size_t>(a)].hydrogens) == 3;
        };
        auto only_single_besides = [&](int a, int bond) {
            for (const Neighbor& nb : m.neighbors(a))
                if (nb.bond != bond && (m.bonds[static_cast<size_t>(nb.bond)].order != 1 ||
                                        m.bonds[static_cast<size_t>(nb.bond)].aromatic))
                    return false;
            return true;
        };
        int iminium = -1;
        std::vector<int> amino;
        for (const Neighbor& nb : m.neighbors(c)) {
            const Atom& an = m.atoms[static_cast<size_t>(nb.atom)];
            const Bond& b = m.bonds[static_cast<size_t>(nb.bond)];
            if (an.z != 7 || an.aromatic || b.aromatic || !three_coordinate(nb.atom) ||
                !only_single_besides(nb.atom, nb.bond))
                continue;
            if (b.order == 2 && an.charge == 1) iminium = nb.bond;
            if (b.order == 1 && an.charge == 0) amino.push_back(nb.bond);
        }
        if (iminium < 0 || amino.empty()) continue;
        const double mean = (2.0 + static_cast<double>(amino.size())) / (1.0 + static_cast<double>(amino.size()));
        orders[static_cast<size_t>(iminium)] = mean;
        for (int e : amino) orders[static_cast<size_t>(e)] = mean;
    }
    // The two ring bonds of the lone-pair donor of a five-membered heteroaromatic ring (X-a=b-c=d-X as written or
    // kekulized) take one order whether the ring is written aromatic or Kekule, so both forms build alike (before:
    // furan C-O 1.30 A aromatic, 1.37 Kekule; thiophene C-S 1.65 / 1.75). O and S share their pair: order 1.25
    // (thiophene C-S 1.71 against 1.714 measured, MW, from memory; furan C-O 1.32 against 1.362, G2 1.365: order 1
    // meets furan's bond but opens the G2 angle MAE by 0.003 deg). Pyrrole's N keeps the aromatic 1.5 (order 1.25
    // met its C-N better, 1.39 against G2 1.377, but cost 0.2 deg in each of its ring angles).
    for (int x = 0; x < m.atom_count(); ++x) {
        const Atom& ax = m.atoms[static_cast<size_t>(x)];
        if (ax.charge != 0 || !(ax.z == 7 || ax.z == 8 || ax.z == 16 || ax.z == 34)) continue;
        std::vector<Neighbor> ring;
        for (const Neighbor& nb : m.neighbors(x)) {
            const Bond& b = m.bonds[static_cast<size_t>(nb.bond)];
            if (b.order == 1 && m.atoms[static_cast<size_t>(nb.atom)].z == 6) ring.push_back(nb);
        }
        if (ring.size() != 2 || m.degree(x) + std::max(0, ax.hydrogens) != (ax.z == 7 ? 3 : 2)) continue;
        // a=b and d=c double bonds, b-c single: the five-membered ring X-a=b-c=d-X.
        auto double_partner = [&](int a) {
            for (const Neighbor& nb : m.neighbors(a))
                if (m.bonds[static_cast<size_t>(nb.bond)].order == 2) return nb.atom;
            return -1;
        };
        const int b = double_partner(ring[0].atom), c = double_partner(ring[1].atom);
        if (b < 0 || c < 0 || b == c) continue;
        bool closed = false;
        for (const Neighbor& nb : m.neighbors(b))
            if (nb.atom == c && m.bonds[static_cast<size_t>(nb.bond)].order == 1) closed = true;
        if (!closed) continue;
        const double donor_order = ax.z == 7 ? 1.5 : 1.25;
        for (const Neighbor& nb : ring) orders[static_cast<size_t>(nb.bond)] = donor_order;
    }
    return orders;
}

// A carbene carbon on a metal, written with a single bond (carbene_on_metal) or a double one (M=C(NR)2).
bool carbene_donor_carbon(const Molecule& m, int j) {
    if (carbene_on_metal(m, j)) return true;
    const Atom& c = m.atoms[static_cast<size_t>(j)];
    if (c.z != 6 || c.charge != 0 || std::max(0, c.hydrogens) != 0 || m.degree(j) != 3) return false;
    int metal = 0, hetero = 0;
    for (const Neighbor& nb : m.neighbors(j)) {
        const Atom& o = m.atoms[static_cast<size_t>(nb.atom)];
        const int order = m.bonds[static_cast<size_t>(nb.bond)].order;
        if (is_d_block_metal(o.z)) metal += order == 2 ? 1 : 10;
        else if (order != 1) return false;
        else if ((o.z == 7 || o.z == 8 || o.z == 16) && o.charge == 0) ++hetero;
    }
    return metal == 1 && hetero >= 1;
}

// The odd electron of a radical written on a terminal atom next to a centre with a pi bond and a lone pair ([O]N=O,
// nitrogen dioxide as databases write it) moves to that centre, as in the charge-separated resonance structure
// [O-][N+](=O) with the odd electron on N (the formula path's least-formal-charge Lewis structure alike): NO2's odd
// electron sits largely on N and its angle is 134 deg (CRC, from memory), where the structure as written is nitrite's
// 115. Returns the charge each atom's electron count is taken with (the written charges stay as written).
std::vector<int> counting_charges(const Molecule& m) {
    std::vector<int> q(m.atoms.size());
    for (size_t i = 0; i < m.atoms.size(); ++i) q[i] = m.atoms[i].charge;
    auto nonbonding = [&](int i) {
        const Atom& a = m.atoms[static_cast<size_t>(i)];
        return element(a.z).valence_electrons - q[static_cast<size_t>(i)] - m.bond_order_sum(i) - std::max(0, a.hydrogens);
    };
    for (int t = 0; t < m.atom_count(); ++t) {
        const Atom& a = m.atoms[static_cast<size_t>(t)];
        if (a.charge != 0 || m.degree(t) != 1 || a.hydrogens > 0 || is_transition_metal(a.z)) continue;
        if (nonbonding(t) < 1 || nonbonding(t) % 2 != 1) continue;
        const Neighbor& nb = m.neighbors(t)[0];
        const int c = nb.atom;
        const Atom& ca = m.atoms[static_cast<size_t>(c)];
        if (ca.charge != 0 || q[static_cast<size_t>(c)] != 0 || is_transition_metal(ca.z) || nonbonding(c) < 2 ||
            nonbonding(c) % 2 != 0 || m.bonds[static_cast<size_t>(nb.bond)].order != 1)
            continue;
        bool pi = false;
        for (const Neighbor& nn : m.neighbors(c))
            if (nn.atom != t && m.bonds[static_cast<size_t>(nn.bond)].order >= 2) pi = true;
        if (!pi) continue;
        q[static_cast<size_t>(t)] = -1;
        q[static_cast<size_t>(c)] = +1;
    }
    return q;
}

// Unpaired electrons of a free main-group atom in its ground state (Hund's rule, common practice): p-block atoms
// min(p, 6 - p) for p electrons in the p shell (C, O, Si, S: 3P; N, P: 4S), s-block atoms their odd s electron.
int free_atom_unpaired(int z, int charge) {
    const ElementData& e = element(z);
    const int electrons = e.valence_electrons - charge;
    if (electrons < 0) return 0;
    if (e.group >= 13 && e.group <= 18) {
        const int p = electrons - 2;
        return p <= 0 ? electrons % 2 : std::max(0, std::min(p, 6 - p));
    }
    if (e.group <= 2) return electrons % 2;
    return -1;  // not said here
}

// What the reader made of an organic-subset atom written above every normal valence (OpenSMILES gives it no
// implicit hydrogens): said in the valence errors, since the SMILES itself is valid.
std::string as_read(const Molecule& m, int i) {
    const Atom& a = m.atoms[static_cast<size_t>(i)];
    const OrganicElement* org = organic_element(a.z);
    if (a.bracket || org == nullptr || a.charge != 0 || m.bond_order_sum(i) <= org->max_valence()) return "";
    return fmt::format(" (read as a neutral {} with no hydrogens: bonds of total order {} are above its normal "
                       "valences, which give hydrogens only below them)",
                       org->name, m.bond_order_sum(i));
}

double angle_between(const Eigen::Vector3d& a, const Eigen::Vector3d& b) {
    return std::acos(std::clamp(a.dot(b), -1.0, 1.0)) * 180.0 / M_PI;
}

}  // namespace

std::string electron_geometry_name(int steric_number) {
    switch (steric_number) {
        case 0:
        case 1: return "none";
        case 2: return "linear";
        case 3: return "trigonal planar";
        case 4: return "tetrahedral";
        case 5: return "trigonal bipyramidal";
        case 6: return "octahedral";
        case 7: return "pentagonal bipyramidal";
        case 8: return "square antiprismatic";
        case 9: return "tricapped trigonal prismatic";
        default: return fmt::format("{} domains", steric_number);
    }
}

// Shape names of the trade (Gillespie and Hargittai 1991), by bonded and non-bonded domain counts.
std::string shape_name(int bonded, int nonbonded) {
    if (bonded == 0) return "single atom";
    if (bonded == 1) return "terminal";
    const int sn = bonded + nonbonded;
    if (bonded == 2) return (sn == 3 || sn == 4) ? "bent" : "linear";
    switch (sn) {
        case 3: return "trigonal planar";
        case 4: return bonded == 4 ? "tetrahedral" : "trigonal pyramidal";
        case 5:
            if (bonded == 5) return "trigonal bipyramidal";
            if (bonded == 4) return "seesaw";
            return "T-shaped";
        case 6:
            if (bonded == 6) return "octahedral";
            if (bonded == 5) return "square pyramidal";
            if (bonded == 4) return "square planar";
            return "T-shaped";
        case 7:
            if (bonded == 7) return "pentagonal bipyramidal";
            if (bonded == 6) return "pentagonal pyramidal";
            if (bonded == 5) return "pentagonal planar";
            return fmt::format("{} bonds, {} non-bonded domains", bonded, nonbonded);
        case 8:
            if (bonded == 8) return "square antiprismatic";
            return fmt::format("{} bonds, {} non-bonded domains", bonded, nonbonded);
        default: return fmt::format("{} bonds, {} non-bonded domains", bonded, nonbonded);
    }
}

std::string axe_class(int bonded, int lone_pairs, int single_electrons) {
    std::string s = "A";
    if (bonded > 0) s += bonded == 1 ? "X" : fmt::format("X{}", bonded);
    if (lone_pairs > 0) s += lone_pairs == 1 ? "E" : fmt::format("E{}", lone_pairs);
    if (single_electrons > 0) s += "+e";
    return s;
}

namespace {

// The domains of a d-block centre: one per ligand domain of the metal analysis, sigma donors in the order of the
// molecule's neighbour list (bonds of hapto ligands skipped), then the hapto ligands (no neighbour atom of their own).
void metal_centre_domains(const Molecule& m, const MetalCentre& metal, const MetalAnalysis& metals, CentreDomains& c) {
    c.bonded = metal.coordination_number;
    c.lone_pairs = 0;
    c.single_electrons = 0;
    c.steric_number = metal.coordination_number;
    c.axe = axe_class(metal.coordination_number, 0, 0);
    c.electron_geometry = metal.polyhedron;
    c.shape = metal.polyhedron;
    const bool solved = metal.directions.size() == metal.ligands.size();
    std::vector<int> sigma_atoms;
    for (const Neighbor& nb : m.neighbors(metal.atom)) {
        if (metals.hapto_atom[static_cast<size_t>(nb.atom)] && !is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z)) continue;
        for (size_t l = 0; l < metal.ligands.size(); ++l) {
            const LigandDomain& lig = metal.ligands[l];
            if (lig.hapto() || lig.atoms[0] != nb.atom) continue;
            c.domains.push_back({DomainKind::bond, nb.atom, nb.bond, m.bonds[static_cast<size_t>(nb.bond)].order, 1, 1});
            if (solved) c.directions.push_back(metal.directions[l]);
            sigma_atoms.push_back(nb.atom);
        }
    }
    for (size_t l = 0; l < metal.ligands.size(); ++l) {
        if (!metal.ligands[l].hapto()) continue;
        c.domains.push_back({DomainKind::bond, -1, -1, 0, 1, 1});
        if (solved) c.directions.push_back(metal.directions[l]);
    }
    if (!solved) {
        c.directions.clear();
        return;
    }
    for (size_t a = 0; a < sigma_atoms.size(); ++a)
        for (size_t b = a + 1; b < sigma_atoms.size(); ++b)
            c.angles.push_back({sigma_atoms[a], sigma_atoms[b], angle_between(c.directions[a], c.directions[b])});
}

// The target length of a bond to a d-block metal (to a donor, to a hapto ligand's atom, to another metal), or 0 for
// a bond between non-metals.
double metal_bond_length(const MetalAnalysis& ma, const Bond& b) {
    for (int side = 0; side < 2; ++side) {
        const int metal = side == 0 ? b.a : b.b, other = side == 0 ? b.b : b.a;
        const int k = ma.centre_of_atom[static_cast<size_t>(metal)];
        if (k < 0) continue;
        for (const LigandDomain& l : ma.centres[static_cast<size_t>(k)].ligands)
            if (std::find(l.atoms.begin(), l.atoms.end(), other) != l.atoms.end()) return l.length;
    }
    return 0;
}

}  // namespace

namespace {

// What the Lewis structure gives one atom (not a metal centre): lone pairs, single electrons, the pair shared with a
// pi system, bonded neighbours, and the names of its class and shape. Bonds to metals: a hapto ligand's atoms give
// their pi electrons (no sigma domain towards the metal); a sigma donor's bond is covalent for the units the metal
// analysis counts so, dative (one lone pair each) for the rest. Returns the number of hapto bonds to metals.
int lewis_counts(const Molecule& m, int i, const MetalAnalysis& ma, bool with_metals, const std::vector<int>& counting,
                 CentreDomains& c) {
    const Atom& atom = m.atoms[static_cast<size_t>(i)];
    const ElementData& el = element(atom.z);
    int metal_units = 0, covalent_units = 0, hapto_bonds = 0;
    const bool hapto_atom = with_metals && ma.hapto_atom[static_cast<size_t>(i)];
    if (with_metals)
        for (const Neighbor& nb : m.neighbors(i)) {
            if (!is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z)) continue;
            if (hapto_atom) {
                ++hapto_bonds;
                continue;
            }
            metal_units += m.bonds[static_cast<size_t>(nb.bond)].order;
            if (const MetalBond* mb = ma.bond(i, nb.atom)) covalent_units += mb->covalent;
        }
    int hapto_order = 0;
    if (hapto_atom)
        for (const Neighbor& nb : m.neighbors(i))
            if (is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z)) hapto_order += m.bonds[static_cast<size_t>(nb.bond)].order;
    const int own_order_sum = m.bond_order_sum(i) + std::max(0, atom.hydrogens) - metal_units - hapto_order;
    const int order_sum = own_order_sum + metal_units;
    // Non-bonding electrons of the Lewis structure: valence electrons less the formal charge and the bonds.
    int nonbonding = el.valence_electrons - counting[static_cast<size_t>(i)] - own_order_sum - covalent_units -
                     2 * (metal_units - covalent_units);
    // An atom of a hapto ligand with an odd electron as written takes one from the metal (ionic model).
    if (hapto_atom && nonbonding % 2 != 0) ++nonbonding;
    if (nonbonding < 0) {
        // Four bonds at a neutral B, Al, Ga, In: an anion or a dative bridge written without its charges.
        const bool acceptor = el.group == 13 && atom.charge == 0 && order_sum == 4;
        throw InputError(fmt::format("{} has bonds of total order {}, more than its {} valence electrons allow{}{}{}",
                                     atom_label(m, i), order_sum, el.valence_electrons,
                                     atom.charge != 0 ? fmt::format(" with charge {:+d}", atom.charge) : "",
                                     as_read(m, i),
                                     acceptor ? "; a four-coordinate group-13 atom is an anion ([BH4-], [Al-]) or "
                                                "the acceptor of a dative bridge, written with its charges "
                                                "(Al2Cl6: Cl[Al-]1(Cl)[Cl+][Al-](Cl)(Cl)[Cl+]1); three-centre "
                                                "two-electron bonds (B2H6) are not modelled"
                                              : ""),
                         {}, atom.column);
    }
    // First-row atoms keep a duet, second-row atoms an octet (octet expansion only from period 3 on).
    const int electrons = 2 * order_sum + nonbonding;
    const int limit = el.period == 1 ? 2 : el.period == 2 ? 8 : 1000;
    if (electrons > limit)
        throw InputError(
            fmt::format("{} would hold {} electrons; a period-{} atom holds at most {}{}{}", atom_label(m, i),
                        electrons, el.period, limit, as_read(m, i),
                        el.period == 2 ? " (write the formal charges, e.g. [N+](=O)[O-] for a nitro group)" : ""),
            {}, atom.column);
    c.lone_pairs = nonbonding / 2;
    c.single_electrons = nonbonding % 2;
    if (hapto_atom) {
        // Its lone pair is part of the pi system the ligand gives to the metal (C5H5-: every carbon trigonal).
        c.delocalised_lone_pairs = c.lone_pairs;
        c.lone_pairs = 0;
    } else if (delocalised_lone_pair(m, i, c.lone_pairs, c.single_electrons)) {
        c.delocalised_lone_pairs = 1;
        --c.lone_pairs;
    }
    c.bonded = m.degree(i) - hapto_bonds + std::max(0, atom.hydrogens);
    // A period-2 radical centre with three bonds and nothing else is planar, its odd electron in the p orbital
    // (common practice; the methyl radical is planar, D3h: Herzberg, from memory). Electronegative ligands
    // pyramidalise it (CF3 is pyramidal, F-C-F about 111 deg, from memory), so F, O and Cl keep the domain.
    if (el.period == 2 && c.single_electrons == 1 && c.lone_pairs == 0 && c.bonded == 3) {
        bool electronegative = false;
        for (const Neighbor& nb : m.neighbors(i)) {
            const int z = m.atoms[static_cast<size_t>(nb.atom)].z;
            electronegative = electronegative || z == 8 || z == 9 || z == 17;
        }
        if (!electronegative) {
            c.single_electrons = 0;
            c.p_single_electrons = 1;
        }
    }
    c.steric_number = c.bonded + c.lone_pairs + c.single_electrons;
    c.axe = axe_class(c.bonded, c.lone_pairs, c.single_electrons);
    c.electron_geometry = electron_geometry_name(c.steric_number);
    c.shape = shape_name(c.bonded, c.lone_pairs + c.single_electrons);
    return hapto_bonds;
}

// The atom's domains on the sphere (bonds, lone pairs, a single electron) with their weights and sizes, and, when
// asked (always for five and six domains), their solved directions and the angles between its bonds.
void sphere_domains(const Molecule& m, int i, bool hapto_atom, int hapto_bonds, bool solve, CentreDomains& c) {
    const DomainModel& model = domain_model();
    const Atom& atom = m.atoms[static_cast<size_t>(i)];
    const std::vector<double> orders = effective_orders(m, i);
    // What the bonding weights depend on beyond the bond (model.cpp), hapto bonds to a metal aside.
    CentreKind kind;
    kind.lone_pairs = c.lone_pairs + c.single_electrons;
    for (size_t k = 0; k < m.neighbors(i).size(); ++k)
        if (!(hapto_atom && is_d_block_metal(m.atoms[static_cast<size_t>(m.neighbors(i)[k].atom)].z))) {
            // Multiple bonds to O or N only: the S(VI)/P(V) term was fitted on S=O and P=O (model.cpp); a
            // C=S bond of an ylide such as CH2=SF4 keeps the base model (check_xtb_maingroup.py).
            const int nz = m.atoms[static_cast<size_t>(m.neighbors(i)[k].atom)].z;
            kind.multiple_bond = kind.multiple_bond || (orders[k] > 1.0 && (nz == 7 || nz == 8));
            if (is_heavy_ligand(m.atoms[static_cast<size_t>(m.neighbors(i)[k].atom)].z)) ++kind.heavy_ligands;
        }
    for (size_t k = 0; k < m.neighbors(i).size(); ++k) {
        const Neighbor& nb = m.neighbors(i)[k];
        if (hapto_atom && is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z)) continue;
        const Bond& b = m.bonds[static_cast<size_t>(nb.bond)];
        SphereDomain sd = bonding_domain(model, atom.z, m.atoms[static_cast<size_t>(nb.atom)].z, orders[k], kind);
        c.domains.push_back({DomainKind::bond, nb.atom, nb.bond, b.order, sd.weight, sd.radius});
    }
    for (int k = 0; k < std::max(0, atom.hydrogens); ++k) {
        SphereDomain sd = bonding_domain(model, atom.z, 1, 1, kind);
        c.domains.push_back({DomainKind::bond, -1, -1, 1, sd.weight, sd.radius});
    }
    // At an oxygen bridging polar heavy atoms the pair left is drawn towards them too (model.cpp, stage 4).
    double lone_pair_factor = 1.0;
    if (atom.z == 8 && c.delocalised_lone_pairs > 0) {
        std::vector<int> zs;
        for (const Neighbor& nb : m.neighbors(i)) zs.push_back(m.atoms[static_cast<size_t>(nb.atom)].z);
        lone_pair_factor = bridge_lone_pair_factor(model, bridge_polarity(zs));
    }
    for (int k = 0; k < c.lone_pairs; ++k) {
        SphereDomain sd = lone_pair_domain(model, atom.z);
        sd.weight *= lone_pair_factor;
        c.domains.push_back({DomainKind::lone_pair, -1, -1, 0, sd.weight, sd.radius});
    }
    if (c.single_electrons) {
        SphereDomain sd = single_electron_domain(model, atom.z);
        c.domains.push_back({DomainKind::single_electron, -1, -1, 0, sd.weight, sd.radius});
    }
    if (c.steric_number > 12)
        throw UnsupportedError(fmt::format("{} has {} electron domains; at most 12 are supported",
                                           atom_label(m, i), c.steric_number));
    // Five- and six-domain centres are solved even when only counting: their bond lengths depend on which bonds
    // are axial (below), and a length must not depend on the flag. Cleared again at the end.
    if ((solve || c.steric_number == 5 || c.steric_number == 6) && c.bonded >= 2) {
        std::vector<SphereDomain> sd, arrangement;
        sd.reserve(c.domains.size());
        arrangement.reserve(c.domains.size());
        for (size_t k = 0; k < c.domains.size(); ++k) {
            const Domain& d = c.domains[k];
            sd.push_back({d.weight, d.radius, d.kind == DomainKind::bond ? model.bond_exponent : model.lone_pair_exponent});
            arrangement.push_back(arrangement_domain(d.kind, k < orders.size() ? orders[k] : 1.0));
        }
        c.directions = solve_sphere_staged(arrangement, sd);
        const int nbonds = m.degree(i) - hapto_bonds;
        for (int a = 0; a < nbonds; ++a)
            for (int b = a + 1; b < nbonds; ++b)
                c.angles.push_back({c.domains[static_cast<size_t>(a)].neighbor, c.domains[static_cast<size_t>(b)].neighbor,
                                    angle_between(c.directions[static_cast<size_t>(a)], c.directions[static_cast<size_t>(b)])});
    }
}

// Every bond's length from the Lewis structure at its two ends (lib/core/bond_length.cpp), metal bonds from the metal
// analysis.
void bond_lengths(const Molecule& m, const MetalAnalysis& ma, bool with_metals, MoleculeDomains& out) {
    const std::vector<double> orders = length_orders(m);
    out.bond_lengths.reserve(m.bonds.size());
    // Per atom: electron pairs of the Lewis structure (bond orders, hydrogens, lone pairs) and, at five- and
    // six-domain centres, which single bonds lie trans (above 150 degrees) to another of its bonds: the axial
    // bonds of a trigonal bipyramid, the basal ones of a square pyramid (lib/core/bond_length.cpp).
    constexpr double kTransCos = -0.866;  // cos 150 degrees
    std::vector<int> pairs(static_cast<size_t>(m.atom_count()), 0), trans_singles(pairs.size(), 0),
        open_singles(pairs.size(), 0);
    std::vector<int> trans_end(2 * m.bonds.size(), 0);  // per bond and end (a, b): 0 unknown, 1 trans, 2 open
    for (int i = 0; i < m.atom_count(); ++i) {
        const CentreDomains& c = out.atoms[static_cast<size_t>(i)];
        int sum = c.lone_pairs + c.delocalised_lone_pairs + std::max(0, m.atoms[static_cast<size_t>(i)].hydrogens);
        for (const Neighbor& nb : m.neighbors(i)) sum += m.bonds[static_cast<size_t>(nb.bond)].order;
        pairs[static_cast<size_t>(i)] = sum;
        if (c.steric_number < 5 || c.steric_number > 6 || c.directions.size() != c.domains.size()) continue;
        for (size_t k = 0; k < c.domains.size(); ++k) {
            const Domain& d = c.domains[k];
            if (d.kind != DomainKind::bond || d.bond < 0) continue;
            bool trans = false;
            for (size_t j = 0; j < c.domains.size(); ++j)
                if (j != k && c.domains[j].kind == DomainKind::bond &&
                    c.directions[k].dot(c.directions[j]) < kTransCos)
                    trans = true;
            const Bond& b = m.bonds[static_cast<size_t>(d.bond)];
            trans_end[2 * static_cast<size_t>(d.bond) + (b.a == i ? 0 : 1)] = trans ? 1 : 2;
            if (b.order == 1) ++(trans ? trans_singles : open_singles)[static_cast<size_t>(i)];
        }
    }
    for (size_t e = 0; e < m.bonds.size(); ++e) {
        const Bond& b = m.bonds[e];
        const CentreDomains& ca = out.atoms[static_cast<size_t>(b.a)];
        const CentreDomains& cb = out.atoms[static_cast<size_t>(b.b)];
        BondEnds ends;
        // The Lewis structure's counts, delocalised pairs included (the radii rules were set on those).
        ends.lone_pairs_a = ca.lone_pairs + ca.delocalised_lone_pairs;
        ends.lone_pairs_b = cb.lone_pairs + cb.delocalised_lone_pairs;
        ends.steric_a = ca.steric_number + ca.delocalised_lone_pairs;
        ends.steric_b = cb.steric_number + cb.delocalised_lone_pairs;
        ends.charge_a = m.atoms[static_cast<size_t>(b.a)].charge;
        ends.charge_b = m.atoms[static_cast<size_t>(b.b)].charge;
        ends.pairs_a = pairs[static_cast<size_t>(b.a)];
        ends.pairs_b = pairs[static_cast<size_t>(b.b)];
        ends.neighbours_a = m.degree(b.a) + std::max(0, m.atoms[static_cast<size_t>(b.a)].hydrogens);
        ends.neighbours_b = m.degree(b.b) + std::max(0, m.atoms[static_cast<size_t>(b.b)].hydrogens);
        auto o_or_f = [&](int i) {
            int n = 0;
            for (const Neighbor& nb : m.neighbors(i)) {
                const int z = m.atoms[static_cast<size_t>(nb.atom)].z;
                n += z == 8 || z == 9;
            }
            return n;
        };
        ends.electronegative_a = o_or_f(b.a);
        ends.electronegative_b = o_or_f(b.b);
        ends.trans_a = trans_end[2 * e];
        ends.trans_b = trans_end[2 * e + 1];
        ends.trans_singles_a = trans_singles[static_cast<size_t>(b.a)];
        ends.trans_singles_b = trans_singles[static_cast<size_t>(b.b)];
        ends.open_singles_a = open_singles[static_cast<size_t>(b.a)];
        ends.open_singles_b = open_singles[static_cast<size_t>(b.b)];
        if (with_metals) {
            const double metal_length = metal_bond_length(ma, b);
            if (metal_length > 0) {
                out.bond_lengths.push_back(metal_length);
                continue;
            }
        }
        double orders_override = 0;
        // The heteroatom of a carbene on a metal (NHC, Fischer) shares its lone pair with the carbene's empty p:
        // order 1.5 (C-N 1.35-1.37 A in NHC complexes, Fischer C-OMe 1.33; from memory).
        if (b.order == 1 && !b.aromatic)
            for (int side = 0; side < 2; ++side) {
                const int c = side == 0 ? b.a : b.b, x = side == 0 ? b.b : b.a;
                const Atom& ax = m.atoms[static_cast<size_t>(x)];
                if ((ax.z == 7 || ax.z == 8 || ax.z == 16) && ax.charge == 0 && carbene_donor_carbon(m, c))
                    orders_override = 1.5;
            }
        // A nitroxide (R2N-O with the odd electron on O: TEMPO) shares it in a two-centre three-electron pi bond:
        // N-O of order 1.5 (TEMPO 1.28 A, di-tert-butyl nitroxide 1.28 A; from memory).
        double order = orders_override > 0 ? orders_override : orders[e];
        for (int side = 0; side < 2; ++side) {
            const int o = side == 0 ? b.a : b.b, n = side == 0 ? b.b : b.a;
            const CentreDomains& co = out.atoms[static_cast<size_t>(o)];
            if (b.order == 1 && m.atoms[static_cast<size_t>(o)].z == 8 && m.atoms[static_cast<size_t>(n)].z == 7 &&
                m.atoms[static_cast<size_t>(o)].charge == 0 && m.atoms[static_cast<size_t>(n)].charge == 0 &&
                m.degree(o) + std::max(0, m.atoms[static_cast<size_t>(o)].hydrogens) == 1 &&
                co.single_electrons + co.p_single_electrons == 1 &&
                m.degree(n) + std::max(0, m.atoms[static_cast<size_t>(n)].hydrogens) == 3)
                order = 1.5;
        }
        out.bond_lengths.push_back(bond_length_between(m.atoms[static_cast<size_t>(b.a)].z,
                                                       m.atoms[static_cast<size_t>(b.b)].z,
                                                       std::clamp(order, 1.0, 3.0), ends));
    }
}

// Lengths the radii are known to miss: the nitrosyl and nitryl halides' N-X.
void halide_nitrogen_lengths(const Molecule& m, MoleculeDomains& out) {
    // The halogen-nitrogen bond of a nitrosyl halide (X-N=O) or a nitryl halide (X-[N+](=O)[O-]) is far longer than
    // the radii give: the molecule is partly X- with NO+ (NO2+). Lengthened by the mean excess of the measured
    // gas-phase structures over the radii (CRC Handbook, "Structure of free molecules in the gas phase", from memory):
    // nitrosyl FNO 1.52, ClNO 1.975, BrNO 2.14 A against radii 1.345, 1.70, 1.85 (excess 0.18, 0.28, 0.29: +0.25);
    // nitryl FNO2 1.467, ClNO2 1.840 against 1.345, 1.70 (excess 0.12, 0.14: +0.13). G2 (MP2(full)/6-31G(d))
    // ClNO 2.031 A is the independent check.
    constexpr double kNitrosylHalide = 0.25, kNitrylHalide = 0.13;
    for (size_t e = 0; e < m.bonds.size(); ++e) {
        const Bond& b = m.bonds[e];
        if (b.order != 1) continue;
        for (int side = 0; side < 2; ++side) {
            const int n = side == 0 ? b.a : b.b, x = side == 0 ? b.b : b.a;
            if (m.atoms[static_cast<size_t>(n)].z != 7 || element(m.atoms[static_cast<size_t>(x)].z).group != 17) continue;
            bool nitroso = false;
            int oxide = 0;
            for (const Neighbor& nb : m.neighbors(n)) {
                if (m.atoms[static_cast<size_t>(nb.atom)].z != 8) continue;
                const Bond& o = m.bonds[static_cast<size_t>(nb.bond)];
                if (o.order == 2) nitroso = true;
                if (o.order == 1 && m.atoms[static_cast<size_t>(nb.atom)].charge == -1) ++oxide;
            }
            if (!nitroso || m.neighbors(n).size() > 3) continue;
            out.bond_lengths[e] += m.neighbors(n).size() == 2 ? kNitrosylHalide : oxide == 1 ? kNitrylHalide : 0.0;
        }
    }
}

// Warnings on bonds of alkali metals whose length the radii do not know.
void alkali_bond_warnings(const Molecule& m, MoleculeDomains& out) {
    // Bonds whose length the radii are known to miss (G2, MP2(full)/6-31G(d), tests/external/check_g2_geometry.py):
    // said in the structure rather than left silent. The ionic bonds of Li, Na and K to O, S and the halogens have
    // radii of their own (lib/core/bond_length.cpp); the others of the alkali metals do not.
    for (const Bond& b : m.bonds) {
        const Atom& x = m.atoms[static_cast<size_t>(b.a)];
        const Atom& y = m.atoms[static_cast<size_t>(b.b)];
        for (int side = 0; side < 2; ++side) {
            const Atom& metal = side == 0 ? x : y;
            const Atom& other = side == 0 ? y : x;
            const ElementData& me = element(metal.z);
            const ElementData& oe = element(other.z);
            if (me.group != 1 || metal.z == 1 || other.z == 1) continue;
            if (me.number <= 19 && (oe.group == 16 || oe.group == 17) && b.order == 1) continue;
            out.warnings.push_back(fmt::format(
                "atoms {} and {}: a bond of an alkali metal is ionic or metallic; its length from covalent radii may be "
                "off by 0.1 A (Li2: 2.66 A, measured 2.673, G2's MP2 2.773)",
                b.a + 1, b.b + 1));
            break;
        }
    }
}

// The multiplicity where the ground state is known to differ from the Lewis structure's count, said in warnings;
// the metal centres' spin reasons.
void ground_state(const Molecule& m, const MetalAnalysis& ma, bool with_metals, MoleculeDomains& out) {
    // Ground states the Lewis structure gets wrong (common practice): dioxygen is a triplet; a neutral divalent
    // carbon (a carbene) may be one.
    int ncomp = 0;
    std::vector<int> comp = m.components(&ncomp);
    std::vector<int> comp_size(static_cast<size_t>(ncomp), 0);
    for (int c : comp) ++comp_size[static_cast<size_t>(c)];
    for (const Bond& b : m.bonds) {
        const Atom& x = m.atoms[static_cast<size_t>(b.a)];
        const Atom& y = m.atoms[static_cast<size_t>(b.b)];
        if (b.order == 2 && x.z == 8 && y.z == 8 && x.charge == 0 && y.charge == 0 &&
            comp_size[static_cast<size_t>(comp[static_cast<size_t>(b.a)])] == 2) {
            out.multiplicity += 2;
            out.warnings.push_back(fmt::format(
                "atoms {} and {}: dioxygen has a triplet ground state; multiplicity raised by 2 (common practice)",
                b.a + 1, b.b + 1));
        }
    }
    for (int i = 0; i < m.atom_count(); ++i) {
        const CentreDomains& c = out.atoms[static_cast<size_t>(i)];
        if (m.atoms[static_cast<size_t>(i)].z == 6 && m.atoms[static_cast<size_t>(i)].charge == 0 && c.bonded == 2 &&
            c.lone_pairs == 1 && m.bond_order_sum(i) == 2)
            out.warnings.push_back(fmt::format(
                "atom {}: a carbene, written as a singlet; its ground state may be a triplet (CH2's is)", i + 1));
    }
    // Ground states of higher spin than the Lewis structure's, by default with a warning (common practice): a free
    // atom follows Hund's rule (C, O: triplet; N: quartet), and a nitrene R-N or R-P (one single bond, two lone pairs,
    // neutral) is a triplet (NH, PH, phenylnitrene, from memory). repel build --multiplicity overrides.
    for (int i = 0; i < m.atom_count(); ++i) {
        const Atom& a = m.atoms[static_cast<size_t>(i)];
        const CentreDomains& c = out.atoms[static_cast<size_t>(i)];
        if (is_transition_metal(a.z)) continue;
        const int written = c.single_electrons + c.p_single_electrons;
        if (c.bonded == 0) {
            const int hund = free_atom_unpaired(a.z, a.charge);
            if (hund > written && (hund - written) % 2 == 0) {
                out.multiplicity += hund - written;
                out.warnings.push_back(fmt::format(
                    "atom {}: a free {} atom; its ground state has {} unpaired electrons (Hund's rule): multiplicity "
                    "raised by {} (give the multiplicity to build another state)",
                    i + 1, element(a.z).symbol, hund, hund - written));
            }
        } else if (element(a.z).group == 15 && a.charge == 0 && c.bonded == 1 && written == 0 &&
                   m.bond_order_sum(i) + std::max(0, a.hydrogens) == 1 &&
                   c.lone_pairs + c.delocalised_lone_pairs == 2) {
            out.multiplicity += 2;
            out.warnings.push_back(fmt::format(
                "atom {}: a nitrene; its ground state is a triplet (NH, phenylnitrene): multiplicity raised by 2 (give "
                "the multiplicity to build the singlet)",
                i + 1));
        }
    }
    int metal_unpaired = 0;
    for (const MetalCentre& mc : ma.centres) metal_unpaired += mc.unpaired_electrons;
    const int ligand_unpaired = out.unpaired_electrons - metal_unpaired;
    if (ligand_unpaired > 1)
        out.warnings.push_back(fmt::format("{} unpaired electrons on different atoms: written high-spin, multiplicity {}",
                                           ligand_unpaired, out.multiplicity));
    if (with_metals) {
        std::string reason;
        for (const MetalCentre& mc : ma.centres)
            reason += fmt::format("{}atom {}: {}", reason.empty() ? "" : "; ", mc.atom + 1, mc.spin_reason);
        if (ligand_unpaired > 0) reason += fmt::format("; {} unpaired on the ligands", ligand_unpaired);
        if (ma.centres.size() > 1 && metal_unpaired > 0)
            out.warnings.push_back(fmt::format("unpaired electrons on {} metal centres written high-spin (parallel), "
                                               "multiplicity {}; their coupling is not predicted",
                                               ma.centres.size(), out.multiplicity));
        out.multiplicity_reason = reason;
    }
}

}  // namespace

MoleculeDomains analyse_domains(const Molecule& m, bool solve, const MetalAnalysis* metals) {
    MoleculeDomains out;
    out.atoms.resize(m.atoms.size());
    bool any_metal = false;
    for (const Atom& a : m.atoms) any_metal = any_metal || is_transition_metal(a.z);
    if (metals != nullptr) out.metals = *metals;
    else if (any_metal) out.metals = analyse_metals(m, solve);
    const MetalAnalysis& ma = out.metals;
    const bool with_metals = !ma.empty();
    for (const std::string& w : ma.warnings) out.warnings.push_back(w);
    const std::vector<int> counting = counting_charges(m);
    for (int i = 0; i < m.atom_count(); ++i) {
        CentreDomains& c = out.atoms[static_cast<size_t>(i)];
        c.atom = i;
        if (with_metals && ma.centre_of_atom[static_cast<size_t>(i)] >= 0) {
            const MetalCentre& metal = ma.centres[static_cast<size_t>(ma.centre_of_atom[static_cast<size_t>(i)])];
            metal_centre_domains(m, metal, ma, c);
            out.unpaired_electrons += metal.unpaired_electrons;
            continue;
        }
        const bool hapto_atom = with_metals && ma.hapto_atom[static_cast<size_t>(i)];
        const int hapto_bonds = lewis_counts(m, i, ma, with_metals, counting, c);
        out.unpaired_electrons += c.single_electrons + c.p_single_electrons;
        sphere_domains(m, i, hapto_atom, hapto_bonds, solve, c);
    }
    bond_lengths(m, ma, with_metals, out);
    if (!solve)
        for (CentreDomains& c : out.atoms) {
            c.directions.clear();
            c.angles.clear();
        }
    halide_nitrogen_lengths(m, out);
    alkali_bond_warnings(m, out);
    out.charge = m.total_charge();
    out.multiplicity = out.unpaired_electrons + 1;

    ground_state(m, ma, with_metals, out);
    return out;
}

}  // namespace repel
