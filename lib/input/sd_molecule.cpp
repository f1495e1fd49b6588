#include "input/sd_molecule.hpp"

#include "graph/polyhedral_stereo.hpp"

#include <fmt/format.h>

#include <Eigen/Geometry>

#include <algorithm>
#include <cmath>
#include <deque>
#include <cstdlib>
#include <sstream>

#include "graph/stereo.hpp"
#include "core/element.hpp"
#include "core/error.hpp"
#include "graph/rings.hpp"
#include "input/kekulize.hpp"
#include "graph/valence.hpp"
#include "input/structure_reader.hpp"

namespace repel {
namespace {

// The line numbers of the reader count from the record's first line; the file's count from first_line.
[[noreturn]] void rethrow_with_file_lines(const InputError& e, long first_line) {
    std::string message = e.what();
    if (message.rfind("line ", 0) == 0) {
        size_t end = message.find(':');
        try {
            const long local = std::stol(message.substr(5, end - 5));
            message = fmt::format("line {}{}", local + first_line - 1, message.substr(end));
        } catch (const std::exception&) {
        }
    }
    const std::string local_start = "record starting on line 1)";
    if (const size_t at = message.find(local_start); at != std::string::npos)
        message.replace(at, local_start.size(), fmt::format("record starting on line {})", first_line));
    throw InputError(message, e.text(), e.column());
}

}  // namespace

// SD files usually state aromatic rings in one Kekule structure (types 1 and 2). The builder treats aromatic bonds as
// order 1.5 (bond lengths, planarity), so rings of 5 to 7 atoms whose pi electrons count 4n + 2 (Hueckel's rule) are
// marked aromatic, as a SMILES in lower case would have them. Per ring atom: 1 electron for a double bond in the ring
// (or to an atom of a ring already found aromatic), 0 for an exocyclic double bond to a heteroatom (the C=O of a
// pyridone or a coumarin, which a SMILES writes c(=O)), 2 for N, O, S, P, Se with a lone pair and no double bond, or
// for C-; anything else (an sp3 atom, an exocyclic C=C) makes the ring not aromatic. Repeated until nothing changes, so
// the inner rings of fused systems are found once their neighbours are.
void perceive_aromatic_rings(Molecule& m) {
    const RingInfo rings = perceive_rings(m);
    // Candidates: every ring of 5 to 7 atoms, then every two such rings fused (sharing a bond) taken together, for
    // systems like imidazo[1,2-a]pyridine that count 4n + 2 only as a whole.
    struct Candidate {
        std::vector<int> atoms, bonds;
    };
    std::vector<Candidate> candidates;
    auto ring_bonds = [&](const std::vector<int>& ring) {
        std::vector<int> out;
        for (size_t i = 0; i < ring.size(); ++i) out.push_back(m.bond_between(ring[i], ring[(i + 1) % ring.size()]));
        return out;
    };
    std::vector<size_t> small;
    for (size_t r = 0; r < rings.rings.size(); ++r)
        if (rings.rings[r].size() >= 5 && rings.rings[r].size() <= 7) {
            small.push_back(r);
            candidates.push_back({rings.rings[r], ring_bonds(rings.rings[r])});
        }
    for (size_t i = 0; i < small.size(); ++i)
        for (size_t j = i + 1; j < small.size(); ++j) {
            const auto& ra = rings.rings[small[i]];
            const auto& rb = rings.rings[small[j]];
            int shared = 0;
            for (int x : ra) shared += static_cast<int>(std::count(rb.begin(), rb.end(), x));
            if (shared != 2) continue;
            Candidate c{ra, ring_bonds(ra)};
            for (int x : rb)
                if (std::find(ra.begin(), ra.end(), x) == ra.end()) c.atoms.push_back(x);
            for (int bnd : ring_bonds(rb))
                if (std::find(c.bonds.begin(), c.bonds.end(), bnd) == c.bonds.end()) c.bonds.push_back(bnd);
            candidates.push_back(std::move(c));
        }
    std::vector<char> aromatic_atom(static_cast<size_t>(m.atom_count()), 0);
    std::vector<char> done(candidates.size(), 0);
    for (bool changed = true; changed;) {
        changed = false;
        for (size_t r = 0; r < candidates.size(); ++r) {
            const Candidate& cand = candidates[r];
            if (done[r]) continue;
            std::vector<char> in_ring(static_cast<size_t>(m.atom_count()), 0);
            for (int a : cand.atoms) in_ring[static_cast<size_t>(a)] = 1;
            int electrons = 0;
            bool ok = true;
            for (int a : cand.atoms) {
                const Atom& atom = m.atoms[static_cast<size_t>(a)];
                int contribution = -1;
                bool has_double = false;
                for (const Neighbor& nb : m.neighbors(a)) {
                    const Bond& b = m.bonds[static_cast<size_t>(nb.bond)];
                    if (b.order != 2) continue;
                    has_double = true;
                    if (in_ring[static_cast<size_t>(nb.atom)] || aromatic_atom[static_cast<size_t>(nb.atom)]) contribution = 1;
                    else if (contribution < 0 && m.atoms[static_cast<size_t>(nb.atom)].z != 6) contribution = 0;
                }
                if (!has_double) {
                    const int connections = m.degree(a) + atom.hydrogens;
                    const bool lone_pair = ((atom.z == 7 || atom.z == 15) && atom.charge == 0 && connections == 3) ||
                                           ((atom.z == 8 || atom.z == 16 || atom.z == 34) && atom.charge == 0 && connections == 2) ||
                                           (atom.z == 6 && atom.charge == -1 && connections == 3);
                    if (lone_pair) contribution = 2;
                }
                if (contribution < 0) {
                    ok = false;
                    break;
                }
                electrons += contribution;
            }
            if (!ok || electrons % 4 != 2) continue;
            done[r] = 1;
            changed = true;
            for (int a : cand.atoms) {
                aromatic_atom[static_cast<size_t>(a)] = 1;
                m.atoms[static_cast<size_t>(a)].aromatic = true;
            }
            for (int bond : cand.bonds)
                if (bond >= 0) m.bonds[static_cast<size_t>(bond)].aromatic = true;
        }
    }
}

namespace {

// The arrangement of a metal with four, five or six sigma ligands in 3D as an OpenSMILES mark (@SP, @TB, @OH over
// its neighbour order), so that the build keeps cis/trans, fac/mer and Delta/Lambda of the file. Only where the
// neighbours sit near the ideal polyhedron (root-mean-square distance of the unit directions below 0.25 after the
// best rotation) and none is part of a hapto ligand; square planar only when flat.
void metal_stereo_from_coordinates(Molecule& m, const std::vector<Eigen::Vector3d>& pos, int a, bool three_d) {
    constexpr double kFit = 0.25;
    const int degree = m.degree(a);
    if (!three_d || degree < 4 || degree > 6) return;
    const auto& nbs = m.neighbors(a);
    for (const Neighbor& x : nbs)
        for (const Neighbor& y : nbs)
            if (x.atom != y.atom && m.bond_between(x.atom, y.atom) >= 0) return;  // a hapto ligand
    std::vector<Eigen::Vector3d> d;
    for (const Neighbor& nb : nbs) d.push_back((pos[static_cast<size_t>(nb.atom)] - pos[static_cast<size_t>(a)]).normalized());
    const ChiralClass cls = degree == 4 ? ChiralClass::SP : degree == 5 ? ChiralClass::TB : ChiralClass::OH;
    double residual = 1e9;
    const int index = best_polyhedral_index(cls, d, &residual);
    if (index <= 0 || !(residual < kFit)) return;
    Atom& atom = m.atoms[static_cast<size_t>(a)];
    atom.stereo_neighbors.clear();
    for (const Neighbor& nb : nbs) atom.stereo_neighbors.push_back(nb.atom);
    atom.chiral_class = cls;
    atom.chiral_index = index;
}

}  // namespace

namespace {

void aromatic_bond_orders(Molecule& m, const ReadStructure& rec, long first_line) {
    const int n = m.atom_count();
    // Aromatic bonds (type 4): orders by kekulization, one double bond for each aromatic atom that has a valence left.
    if (!rec.needs_orders.empty()) {
        std::vector<unsigned char> needs(static_cast<size_t>(n), 0);
        std::vector<unsigned char> on_aromatic(static_cast<size_t>(n), 0);
        for (int b : rec.needs_orders) {
            on_aromatic[static_cast<size_t>(m.bonds[static_cast<size_t>(b)].a)] = 1;
            on_aromatic[static_cast<size_t>(m.bonds[static_cast<size_t>(b)].b)] = 1;
        }
        for (int a = 0; a < n; ++a) {
            Atom& atom = m.atoms[static_cast<size_t>(a)];
            if (!on_aromatic[static_cast<size_t>(a)]) continue;
            atom.aromatic = true;
            const OrganicElement* e = organic_element(atom.z);
            if (!e) continue;
            const int sum = m.bond_order_sum(a);
            const int v = charged_organic_valence(*e, atom.charge, sum + 1);
            const int unpaired = atom.radical_electrons > 0 ? atom.radical_electrons : 0;
            needs[static_cast<size_t>(a)] = v - sum - unpaired >= 1 ? 1 : 0;
        }
        const int left = kekulize(m, needs);
        if (left >= 0)
            throw InputError(fmt::format("line {}: the aromatic bonds cannot be given single and double orders (atom {} "
                                         "is left without a double bond)",
                                         first_line, left + 1),
                             "", 0);
    }

}

void implicit_hydrogens(Molecule& m) {
    const int n = m.atom_count();
    // Hydrogens the file leaves out: organic-subset atoms up to their normal valence.
    for (int a = 0; a < n; ++a) {
        Atom& atom = m.atoms[static_cast<size_t>(a)];
        const OrganicElement* e = organic_element(atom.z);
        if (!e) continue;
        // An atom bonded to a metal: its bond may be dative (NH3 on Pt has four bonds and no hydrogen to add), so
        // none are added; files of complexes list their hydrogens.
        bool on_metal = false;
        for (const Neighbor& nb : m.neighbors(a)) on_metal = on_metal || is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z);
        if (on_metal) continue;
        const int sum = m.bond_order_sum(a);
        const int unpaired = atom.radical_electrons > 0 ? atom.radical_electrons : 0;
        const int v = charged_organic_valence(*e, atom.charge, sum + unpaired);
        if (v < 0 || sum + unpaired > v) continue;  // more bonds than a normal valence: hypervalent as written
        atom.hydrogens = v - sum - unpaired;
    }

}

void tetrahedral_stereo(Molecule& m, const std::vector<Eigen::Vector3d>& pos, const ReadStructure& rec) {
    const int n = m.atom_count();
    // Stereo from the coordinates. Tetrahedral centres from 3D coordinates, or from a flat drawing's wedge and hash
    // bonds; a centre is marked when its four substituents are not two hydrogens or more.
    bool three_d = false;
    for (const auto& p : pos)
        if (std::abs(p.z()) > 1e-4) three_d = true;
    // A flat drawing shows a centre's handedness by wedge (toward the viewer) and hash (away) bonds starting at it:
    // the wedged neighbour is lifted out of the plane (by 0.8 of the bond length) for the volume below.
    const std::vector<int> wedges =
        three_d || rec.bond_stereo.size() != m.bonds.size() ? std::vector<int>() : rec.bond_stereo;
    for (int a = 0; a < n; ++a) {
        Atom& atom = m.atoms[static_cast<size_t>(a)];
        const int degree = m.degree(a);
        if (is_d_block_metal(atom.z)) {
            metal_stereo_from_coordinates(m, pos, a, three_d);
            continue;
        }
        if (degree + atom.hydrogens != 4 || degree < 3) continue;
        // An atom of a hapto ligand (bonded to a metal that one of its neighbours is bonded to) has no handedness.
        bool hapto = false;
        for (const Neighbor& nb : m.neighbors(a))
            if (is_d_block_metal(m.atoms[static_cast<size_t>(nb.atom)].z))
                for (const Neighbor& other : m.neighbors(a))
                    hapto = hapto || (other.atom != nb.atom && m.bond_between(other.atom, nb.atom) >= 0);
        if (hapto) continue;
        int hydrogens = atom.hydrogens;
        for (const Neighbor& nb : m.neighbors(a))
            if (m.atoms[static_cast<size_t>(nb.atom)].z == 1) ++hydrogens;
        if (hydrogens >= 2) continue;
        const auto& nbs = m.neighbors(a);
        const Eigen::Vector3d c = pos[static_cast<size_t>(a)];
        std::vector<Eigen::Vector3d> d;
        bool wedged = three_d;
        for (const Neighbor& nb : nbs) {
            Eigen::Vector3d v = pos[static_cast<size_t>(nb.atom)] - c;
            if (!three_d && !wedges.empty() && m.bonds[static_cast<size_t>(nb.bond)].a == a) {
                const int code = wedges[static_cast<size_t>(nb.bond)];
                if (code == 1 || code == 6) {
                    v.z() += (code == 1 ? 0.8 : -0.8) * v.norm();
                    wedged = true;
                }
            }
            d.push_back(v.normalized());
        }
        if (!wedged) continue;  // a flat drawing without wedges at this centre: no handedness shown
        // The orientation that the library's chirality targets use (graph/stereo.hpp): with the neighbours in list
        // order n0 n1 n2 n3, '@' puts (n1, n2, n3) at kAnticlockwiseSign seen from the centre, which has the sign of
        // the tetrahedron (n0, n1, n2, n3) since the centre lies on n0's side of the face n1 n2 n3 (this form also
        // works when only n0 is out of the plane of a drawing). With an implicit hydrogen listed second (n0 H n1 n2),
        // the even permutation (H n0 n2 n1) puts (n0, n2, n1) there.
        const double volume = degree == 4 ? (d[1] - d[0]).dot((d[2] - d[0]).cross(d[3] - d[0]))
                                          : d[0].dot(d[2].cross(d[1]));
        if (std::abs(volume) < 0.1) continue;  // drawn flat: no handedness to keep
        atom.stereo_neighbors.clear();
        for (const Neighbor& nb : nbs) atom.stereo_neighbors.push_back(nb.atom);
        if (degree == 3) atom.stereo_neighbors.insert(atom.stereo_neighbors.begin() + 1, kImplicitHydrogen);
        atom.chiral_class = ChiralClass::TH;
        atom.chiral_index = (volume < 0 ? -1 : 1) == kAnticlockwiseSign ? 1 : 2;
    }
}

void double_bond_stereo(Molecule& m, const std::vector<Eigen::Vector3d>& pos) {
    // Double bonds outside rings of up to 8 atoms, with a substituent at each end: cis or trans as drawn (in a small
    // ring the ring fixes the configuration, and it is not marked).
    SmallRingSearch small_rings(m);
    for (int b = 0; b < m.bond_count(); ++b) {
        Bond& bond = m.bonds[static_cast<size_t>(b)];
        if (bond.order != 2 || bond.aromatic) continue;
        auto pick = [&](int at, int other) {
            int best = -1;
            for (const Neighbor& nb : m.neighbors(at))
                if (nb.atom != other && (best < 0 || (m.atoms[static_cast<size_t>(best)].z == 1 &&
                                                      m.atoms[static_cast<size_t>(nb.atom)].z != 1)))
                    best = nb.atom;
            return best;
        };
        const int ra = pick(bond.a, bond.b), rb = pick(bond.b, bond.a);
        if (ra < 0 || rb < 0 || small_rings.bond_in_ring(b, 8)) continue;
        const Eigen::Vector3d b1 = pos[static_cast<size_t>(bond.a)] - pos[static_cast<size_t>(ra)];
        const Eigen::Vector3d b2 = pos[static_cast<size_t>(bond.b)] - pos[static_cast<size_t>(bond.a)];
        const Eigen::Vector3d b3 = pos[static_cast<size_t>(rb)] - pos[static_cast<size_t>(bond.b)];
        const Eigen::Vector3d n1 = b1.cross(b2), n2 = b2.cross(b3);
        if (n1.norm() < 1e-6 || n2.norm() < 1e-6) continue;  // a linear end
        const double cosine = n1.normalized().dot(n2.normalized());
        if (std::abs(cosine) < 0.2) continue;  // drawn near 90 degrees: no configuration to read
        bond.stereo = cosine > 0 ? BondStereo::cis : BondStereo::trans;
        bond.ref_a = ra;
        bond.ref_b = rb;
    }
}

}  // namespace

Molecule molecule_from_sd_record(const std::string& text, long first_line) {
    std::istringstream in(text);
    std::vector<ReadStructure> records;
    try {
        records = read_sdf(in);
    } catch (const InputError& e) {
        rethrow_with_file_lines(e, first_line);
    }
    if (records.empty()) throw InputError(fmt::format("line {}: an empty SD record", first_line), "", 0);
    ReadStructure& rec = records.front();
    Molecule m = std::move(rec.structure.molecule);
    const std::vector<Eigen::Vector3d>& pos = rec.structure.positions;
    const int n = m.atom_count();
    if (n == 0) throw InputError(fmt::format("line {}: the record has no atoms", first_line), "", 0);

    aromatic_bond_orders(m, rec, first_line);
    implicit_hydrogens(m);
    perceive_aromatic_rings(m);

    tetrahedral_stereo(m, pos, rec);
    double_bond_stereo(m, pos);
    m.name = rec.title;
    return m;
}

}  // namespace repel
