// The audit: perceive what the file does not state, then compare the measured structure with what the engine's
// domain analysis, the bond-length table and the van der Waals radii expect.
#include "check/audit.hpp"

#include "domains/metal.hpp"
#include "graph/conjugation.hpp"
#include "graph/rings.hpp"

#include <fmt/format.h>

#include <Eigen/Geometry>

#include <algorithm>
#include <cmath>
#include <numeric>
#include <set>
#include <unordered_map>

#include "check/expected_length.hpp"
#include "core/bond_length.hpp"
#include "core/element.hpp"
#include "core/limits.hpp"
#include "core/error.hpp"
#include "core/neighbor_grid.hpp"
#include "check/compare.hpp"
#include "check/shape_measure.hpp"
#include "domains/domains.hpp"
#include "input/sd_molecule.hpp"
#include "input/smiles.hpp"

namespace repel {
namespace {

double angle_deg(const Eigen::Vector3d& u, const Eigen::Vector3d& v) {
    const double c = u.normalized().dot(v.normalized());
    return std::acos(std::clamp(c, -1.0, 1.0)) * 180.0 / M_PI;
}

std::string label(const Molecule& m, int i) {
    return fmt::format("{}{}", element(m.atoms[static_cast<size_t>(i)].z).symbol, i + 1);
}

Severity severity_of(double ratio) { return ratio >= 2.0 ? Severity::error : Severity::warning; }

// An O or N with lone pairs bonded to Si, P, B, Al, Ge, As or a sulfonyl S: its angle opens far beyond what the
// isolated centre's domains give (Si-O-Si 140-180 degrees, the P-O-P of a diphosphate 130-140, trisilylamine
// planar; the lone pairs are drawn into the acceptor's sigma* or empty orbitals and the bond turns ionic, common
// practice), so the model has no angle to hold it to and the centre is not judged.
bool angle_opened_by_neighbours(const Molecule& m, int centre, const CentreDomains& c) {
    const int z = m.atoms[static_cast<size_t>(centre)].z;
    if ((z != 7 && z != 8) || c.lone_pairs + c.delocalised_lone_pairs == 0) return false;
    for (const Neighbor& nb : m.neighbors(centre)) {
        const int zn = m.atoms[static_cast<size_t>(nb.atom)].z;
        if (zn == 5 || zn == 13 || zn == 14 || zn == 15 || zn == 32 || zn == 33) return true;
        if (zn == 16 && m.degree(nb.atom) >= 3) return true;
    }
    return false;
}

// A hydrogen on N, O or F and an N, O or F of another group at 1.4 A or more: a hydrogen bond, not a clash (the
// O-H...N of neutral arginine's acid and guanidine is 1.65 A in its GFN2-xTB optimum; H...O of strong hydrogen bonds
// runs from about 1.5 A, from memory). Closer than 1.4 A it is still a contact.
bool hydrogen_bond(const Molecule& m, int i, int j, double distance) {
    auto acceptor = [&](int a) {
        const int z = m.atoms[static_cast<size_t>(a)].z;
        return z == 7 || z == 8 || z == 9;
    };
    auto polar_h = [&](int h) {
        if (m.atoms[static_cast<size_t>(h)].z != 1) return false;
        for (const Neighbor& nb : m.neighbors(h))
            if (acceptor(nb.atom)) return true;
        return false;
    };
    return distance >= 1.4 && ((polar_h(i) && acceptor(j)) || (polar_h(j) && acceptor(i)));
}

// Degrees: the angle sum above which a three-bonded centre with a lone pair of its own is drawn flat (a choice:
// the flattest sound pyramid among the G2 geometries and the GFN2-xTB optima of check_optima.xyz is under it).
constexpr double kFlatPyramid = 355.0;

struct AngleFit {
    double rms = 0;
    int pairs = 0;
    int worst_a = -1, worst_b = -1;
    double worst_measured = 0, worst_predicted = 0;
    double worst = 0;  // the largest |measured - predicted| of the fit kept (the planar one where it is kept)
};

// Compares the measured angles at a centre with the predicted ones, under the best assignment of the predicted
// directions to neighbours of the same element and bond order (the solver's numbering of equivalent domains is
// arbitrary: which F of SF4 is axial is the structure's choice).
AngleFit fit_angles(const Molecule& m, const std::vector<Eigen::Vector3d>& pos, const CentreDomains& c,
                    bool planar_ok, SmallRingSearch& rings) {
    AngleFit fit;
    const auto& nbs = m.neighbors(c.atom);
    const int k = static_cast<int>(nbs.size());
    std::unordered_map<int, int> slot;
    for (int i = 0; i < k; ++i) slot[nbs[static_cast<size_t>(i)].atom] = i;
    std::vector<double> P(static_cast<size_t>(k * k), 0), M(static_cast<size_t>(k * k), 0);
    std::vector<char> use(static_cast<size_t>(k * k), 0);
    for (const PredictedAngle& a : c.angles) {
        auto ia = slot.find(a.a), ib = slot.find(a.b);
        if (ia == slot.end() || ib == slot.end()) continue;
        P[static_cast<size_t>(ia->second * k + ib->second)] = a.degrees;
        P[static_cast<size_t>(ib->second * k + ia->second)] = a.degrees;
    }
    const Eigen::Vector3d& o = pos[static_cast<size_t>(c.atom)];
    for (int i = 0; i < k; ++i)
        for (int j = i + 1; j < k; ++j) {
            const int a = nbs[static_cast<size_t>(i)].atom, b = nbs[static_cast<size_t>(j)].atom;
            M[static_cast<size_t>(i * k + j)] = angle_deg(pos[static_cast<size_t>(a)] - o, pos[static_cast<size_t>(b)] - o);
            // The angle inside a ring of five or fewer atoms is the ring's, not the domains'. At a donor, the angles
            // towards its metal are not judged: the bond is largely ionic and the donor's geometry towards it soft
            // (coordinated water runs from pyramidal to planar in crystals and in xtb optima; common practice).
            const bool to_metal = !is_d_block_metal(m.atoms[static_cast<size_t>(c.atom)].z) &&
                                  (is_d_block_metal(m.atoms[static_cast<size_t>(a)].z) ||
                                   is_d_block_metal(m.atoms[static_cast<size_t>(b)].z));
            // The same inside a ring of seven to nine atoms when no smaller ring holds the angle: closing it opens
            // the angles (the imine C-N=C of diazepam's seven-membered ring is 130 degrees in its GFN2-xTB optimum,
            // the isolated centre gives 114; a regular heptagon has 128.6).
            const bool medium_ring = !rings.angle_in_ring(a, c.atom, b, 6) && rings.angle_in_ring(a, c.atom, b, 9);
            use[static_cast<size_t>(i * k + j)] = !rings.angle_in_ring(a, c.atom, b, 5) && !medium_ring && !to_metal;
        }
    auto cls = [&](int i) {
        const Neighbor& nb = nbs[static_cast<size_t>(i)];
        return m.atoms[static_cast<size_t>(nb.atom)].z * 8 + m.bonds[static_cast<size_t>(nb.bond)].order;
    };
    std::vector<int> perm(static_cast<size_t>(k)), best(static_cast<size_t>(k));
    std::iota(perm.begin(), perm.end(), 0);
    best = perm;
    double best_cost = 1e300;
    do {
        bool ok = true;
        for (int i = 0; i < k && ok; ++i) ok = cls(i) == cls(perm[static_cast<size_t>(i)]);
        if (!ok) continue;
        double cost = 0;
        for (int i = 0; i < k; ++i)
            for (int j = i + 1; j < k; ++j)
                if (use[static_cast<size_t>(i * k + j)]) {
                    const double d = M[static_cast<size_t>(i * k + j)] -
                                     P[static_cast<size_t>(perm[static_cast<size_t>(i)] * k + perm[static_cast<size_t>(j)])];
                    cost += d * d;
                }
        if (cost < best_cost) {
            best_cost = cost;
            best = perm;
        }
    } while (k <= 8 && std::next_permutation(perm.begin(), perm.end()));
    double worst = -1;
    for (int i = 0; i < k; ++i)
        for (int j = i + 1; j < k; ++j) {
            if (!use[static_cast<size_t>(i * k + j)]) continue;
            const double p = P[static_cast<size_t>(best[static_cast<size_t>(i)] * k + best[static_cast<size_t>(j)])];
            const double d = std::fabs(M[static_cast<size_t>(i * k + j)] - p);
            ++fit.pairs;
            if (d > worst) {
                worst = d;
                fit.worst_a = nbs[static_cast<size_t>(i)].atom;
                fit.worst_b = nbs[static_cast<size_t>(j)].atom;
                fit.worst_measured = M[static_cast<size_t>(i * k + j)];
                fit.worst_predicted = p;
            }
        }
    fit.rms = fit.pairs > 0 ? std::sqrt(best_cost / fit.pairs) : 0;
    fit.worst = std::max(0.0, worst);
    if (planar_ok && fit.pairs > 0) {
        double planar = 0, planar_worst = 0;
        for (int i = 0; i < k; ++i)
            for (int j = i + 1; j < k; ++j)
                if (use[static_cast<size_t>(i * k + j)]) {
                    planar += std::pow(M[static_cast<size_t>(i * k + j)] - 120.0, 2);
                    planar_worst = std::max(planar_worst, std::fabs(M[static_cast<size_t>(i * k + j)] - 120.0));
                }
        if (std::sqrt(planar / fit.pairs) < fit.rms) {
            fit.rms = std::sqrt(planar / fit.pairs);
            fit.worst = planar_worst;
        }
    }
    return fit;
}

// The IUPAC symbol of the reference polyhedron that is the model's polyhedron (domains/metal.cpp names), or "" where
// the model's shape is not one of the reference polyhedra (a piano stool; a hapto ligand taking several sites).
std::string_view model_symbol(const std::string& polyhedron, int coordination_number) {
    static const std::pair<std::string_view, std::string_view> kNames[] = {
        {"linear", "L-2"},          {"trigonal planar", "TP-3"},       {"T-shaped", "TS-3"},
        {"tetrahedral", "T-4"},     {"square planar", "SP-4"},        {"seesaw", "SS-4"},
        {"trigonal bipyramidal", "TBPY-5"}, {"square pyramidal", "SPY-5"}, {"octahedral", "OC-6"},
        {"trigonal prismatic", "TPR-6"},    {"pentagonal bipyramidal", "PBPY-7"},
        {"square antiprismatic", "SAPR-8"}, {"cubic", "CU-8"},           {"tricapped trigonal prismatic", "TCTPR-9"}};
    if (polyhedron == "sandwich" && coordination_number == 2) return "L-2";
    for (const auto& [name, symbol] : kNames)
        if (name == polyhedron) {
            // The name holds for the sites; with a hapto ligand on several sites the domains are fewer.
            const int vertices = symbol.back() - '0';
            return vertices == coordination_number ? symbol : std::string_view();
        }
    return {};
}

// Unit vectors from the metal to each ligand domain (a hapto ligand at the centroid of its atoms): the polyhedron's
// shape by its directions alone, since the bond lengths are judged on their own and a hapto ligand's centroid sits
// much closer than a sigma donor.
std::vector<Eigen::Vector3d> ligand_directions(const MetalCentre& c, const std::vector<Eigen::Vector3d>& pos) {
    std::vector<Eigen::Vector3d> out;
    const Eigen::Vector3d& o = pos[static_cast<size_t>(c.atom)];
    for (const LigandDomain& l : c.ligands) {
        Eigen::Vector3d p = Eigen::Vector3d::Zero();
        for (int a : l.atoms) p += pos[static_cast<size_t>(a)];
        p /= static_cast<double>(l.atoms.size());
        const Eigen::Vector3d v = p - o;
        if (v.norm() < 1e-6) return {};
        out.push_back(v.normalized());
    }
    return out;
}

void check_metal_centre(Audit& out, const MetalCentre& c, const std::vector<Eigen::Vector3d>& pos,
                        const AuditOptions& opt) {
    const Molecule& m = out.structure.molecule;
    MetalCentreAudit a;
    a.atom = c.atom;
    a.coordination_number = c.coordination_number;
    a.oxidation_state = c.oxidation_state;
    a.d_electrons = c.d_electrons;
    a.unpaired_electrons = c.unpaired_electrons;
    a.model_polyhedron = c.polyhedron;
    a.model_reason = c.polyhedron_reason;
    const int cn = c.coordination_number;
    const std::vector<Eigen::Vector3d> dirs = ligand_directions(c, pos);
    bool finite = true;
    for (const Eigen::Vector3d& d : dirs) finite = finite && d.allFinite() && d.norm() > 0.5;
    if (cn >= 2 && cn <= 9 && static_cast<int>(dirs.size()) == cn && finite) {
        const Eigen::Vector3d origin = Eigen::Vector3d::Zero();
        const std::vector<ShapeVerdict> verdicts = shape_measures(dirs, origin);
        a.polyhedron = std::string(verdicts.front().name);
        a.symbol = std::string(verdicts.front().symbol);
        a.shape_measure = verdicts.front().measure;
        if (static_cast<int>(c.directions.size()) == cn) {
            ReferencePolyhedron model{c.polyhedron, model_symbol(c.polyhedron, cn), cn, {}};
            for (const Eigen::Vector3d& d : c.directions) model.points.push_back(d.normalized());
            a.model_shape_measure = continuous_shape_measure(dirs, origin, model);
            const std::string_view own = model_symbol(c.polyhedron, cn);
            if (a.model_shape_measure > opt.metal_shape && own != verdicts.front().symbol) {
                const double ratio = a.model_shape_measure / opt.metal_shape;
                out.findings.push_back(
                    {"geometry", {c.atom + 1},
                     fmt::format("{} ({}, {}{}): the coordination polyhedron is nearest a {} ({}, CShM {:.2f}); "
                                 "CShM {:.2f} from the model's {}",
                                 label(m, c.atom), fmt::format("d{}, oxidation state {:+d}", c.d_electrons,
                                                               c.oxidation_state),
                                 c.polyhedron, own.empty() ? "" : fmt::format(" {}", own), a.polyhedron, a.symbol,
                                 a.shape_measure, a.model_shape_measure, c.polyhedron),
                     a.model_shape_measure, 0.0, "", severity_of(ratio), ratio});
            }
        }
    }
    out.metals.push_back(std::move(a));
}

// `overlapped`: the overlaps found; with one, a radical most likely comes from the misplaced atom, so
// --multiplicity, which cannot fix it, is not suggested.
void check_valences(Audit& out, const ValenceResult& v, int unpaired_allowed, bool multiplicity_known,
                    const std::set<std::pair<int, int>>& overlapped) {
    const Molecule& m = out.structure.molecule;
    for (int i : v.overbonded) {
        out.findings.push_back({"neighbours", {i + 1},
                                fmt::format("{} has {} neighbours, more than any normal valence of {} allows", label(m, i),
                                            m.degree(i), element(m.atoms[static_cast<size_t>(i)].z).symbol),
                                m.degree(i), std::nullopt, "", Severity::error, 100});
    }
    // With the multiplicity known, unpaired electrons beyond multiplicity - 1 may pair up as a lone pair on one atom
    // (a singlet carbene, a bare atom); without it, every unpaired electron is a finding (the contract's rule).
    bool explained = v.total_unpaired == 0;
    if (multiplicity_known && v.total_unpaired >= unpaired_allowed && (v.total_unpaired - unpaired_allowed) % 2 == 0) {
        int pairable = 0;
        for (int u : v.unpaired) pairable += 2 * (u / 2);
        explained = pairable >= v.total_unpaired - unpaired_allowed;
    }
    if (!explained) {
        for (int i = 0; i < m.atom_count(); ++i) {
            const int u = v.unpaired[static_cast<size_t>(i)];
            if (u <= 0) continue;
            const char* advice = !overlapped.empty() ? "; an overlap was found: the atom misplaced there is probably "
                                                       "the one it lacks"
                                 : multiplicity_known ? ""
                                                      : "; give --multiplicity if the structure is open-shell";
            out.findings.push_back(
                {"radical", {i + 1},
                 fmt::format("{} is {} short of a normal valence: {} (a radical), or a missing hydrogen or neighbour{}",
                             label(m, i), u == 1 ? "one bond" : fmt::format("{} bonds", u),
                             u == 1 ? "an unpaired electron" : fmt::format("{} unpaired electrons", u), advice),
                 m.bond_order_sum(i), m.bond_order_sum(i) + u, "", Severity::error, 50});
        }
    }
}

// Step 1 of the audit: bonds from distances where the file states none; every overlap found is a finding, and the
// atoms left out of the perception are marked in `excluded`. Returns the overlapping pairs (0-based, a < b).
std::set<std::pair<int, int>> perceive_and_report_overlaps(Audit& out, Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                                                         const AuditOptions& opt, std::vector<char>& excluded) {
    std::set<std::pair<int, int>> overlapping;  // pairs reported as overlaps (0-based, a < b): not contacts again
    out.bonds_from_coordinates = true;
    for (const Overlap& o : perceive_bonds(m, pos, opt.perception)) {
        overlapping.emplace(std::min(o.a, o.b), std::max(o.a, o.b));
        for (int x : o.also) overlapping.emplace(std::min(x, o.b), std::max(x, o.b));
        if (!o.left_out) {
            out.findings.push_back({"overlap", {std::min(o.a, o.b) + 1, std::max(o.a, o.b) + 1},
                                    fmt::format("{} and {} overlap: {:.2f} A apart, within bonding distance, but "
                                                "each hydrogen has a bond of its own (one is misplaced or "
                                                "duplicated); they are not bonded to each other",
                                                label(m, o.a), label(m, o.b), o.distance),
                                    o.distance, std::nullopt, "angstrom", Severity::error, 200});
            continue;
        }
        excluded[static_cast<size_t>(o.b)] = 1;
        if (!o.also.empty()) {
            std::string others;
            std::vector<int> atoms{o.b + 1, o.a + 1};
            for (int x : o.also) {
                others += ", " + label(m, x);
                atoms.push_back(x + 1);
            }
            out.findings.push_back({"overlap", atoms,
                                    fmt::format("{} overlaps {}{}: within bonding distance of {} atoms (nearest "
                                                "{:.2f} A), but a hydrogen bonds to one (it is misplaced); {} is "
                                                "left out of the bond perception",
                                                label(m, o.b), label(m, o.a), others, o.also.size() + 1,
                                                o.distance, label(m, o.b)),
                                    o.distance, std::nullopt, "angstrom", Severity::error, 200});
            continue;
        }
        out.findings.push_back({"overlap", {std::min(o.a, o.b) + 1, std::max(o.a, o.b) + 1},
                                fmt::format("{} and {} overlap: {:.2f} A apart (one is misplaced or "
                                            "duplicated); {} is left out of the bond perception",
                                            label(m, o.a), label(m, o.b), o.distance, label(m, o.b)),
                                o.distance, std::nullopt, "angstrom", Severity::error, 200});
    }
    return overlapping;
}

// Step 1: bond orders and formal charges where the file does not state them (the ionic model at metals), the
// unpaired electrons left; overbonded atoms join `excluded`.
ValenceResult orders_and_charges(Audit& out, const ReadStructure& in, Molecule& m, const std::vector<Eigen::Vector3d>& pos,
                                 const AuditOptions& opt, int unpaired_allowed, std::vector<char>& excluded) {
    const int n = m.atom_count();
    ValenceResult valence;
    bool any_metal = false;
    for (const Atom& a : m.atoms) any_metal = any_metal || is_d_block_metal(a.z);
    if (!in.has_orders || !in.needs_orders.empty()) {
        out.orders_assigned = true;
        if (any_metal && !in.has_orders) {
            valence = assign_valences_ionic(m, pos, out.charge, &excluded);
            out.notes.push_back("ionic model at the metal centres: the ligands are taken as the closed-shell species "
                                "cut off the metal, which takes what is left of the total charge (its oxidation state)");
            // The coordinates cannot tell a complex's charge: the metal absorbs whatever is assumed.
            if (!opt.charge && !in.has_charge)
                out.notes.push_back("no total charge given: the metal oxidation states assume a neutral structure "
                                    "(give --charge for an ion)");
        } else {
            valence = in.has_orders
                          ? assign_valences(m, pos, out.charge, unpaired_allowed, &in.needs_orders, true, &excluded)
                          : assign_valences(m, pos, out.charge, unpaired_allowed, nullptr, false, &excluded);
        }
    } else {
        valence.unpaired.assign(static_cast<size_t>(n), 0);
        std::vector<int> shortfall = valence_shortfall(m);
        for (int i = 0; i < n; ++i) {
            if (shortfall[static_cast<size_t>(i)] < 0) valence.overbonded.push_back(i);
            else valence.unpaired[static_cast<size_t>(i)] = shortfall[static_cast<size_t>(i)];
            valence.total_unpaired += std::max(0, shortfall[static_cast<size_t>(i)]);
        }
        valence.charge = m.total_charge();
    }
    // An atom left out of perception (it overlaps another) has no valence to judge: its overlap is the finding.
    for (int i = 0; i < n; ++i)
        if (excluded[static_cast<size_t>(i)] && valence.unpaired[static_cast<size_t>(i)] > 0) {
            valence.total_unpaired -= valence.unpaired[static_cast<size_t>(i)];
            valence.unpaired[static_cast<size_t>(i)] = 0;
            m.atoms[static_cast<size_t>(i)].radical_electrons = -1;
        }
    for (int i : valence.overbonded) excluded[static_cast<size_t>(i)] = 1;
    return valence;
}

// Step 1: aromatic rings from the assigned Kekule orders.
void mark_aromatic_rings(Molecule& m, const std::vector<char>& excluded) {
    // Aromatic rings (and so their bonds' order 1.5) from the assigned Kekule orders: one Kekule structure draws a
    // benzene ring's equal bonds alternately single and double, and judging or cleaning the ring by it would call
    // every bond 0.06 A wrong (and --fix would make it so). Found on a copy without the atoms left out, so that a
    // broken part (a dense cloud of overbonded atoms) cannot make the ring search costly.
    {
        Molecule rings = m;
        std::vector<Bond> kept;
        for (const Bond& b : rings.bonds)
            if (!excluded[static_cast<size_t>(b.a)] && !excluded[static_cast<size_t>(b.b)]) kept.push_back(b);
        rings.set_bonds(std::move(kept));
        perceive_aromatic_rings(rings);
        for (const Bond& b : rings.bonds)
            if (b.aromatic) {
                const int k = m.bond_between(b.a, b.b);
                m.bonds[static_cast<size_t>(k)].aromatic = true;
                m.atoms[static_cast<size_t>(b.a)].aromatic = m.atoms[static_cast<size_t>(b.b)].aromatic = true;
            }
    }
}

// Step 1: the electron count against the charge and multiplicity given; the multiplicity written out.
void judge_charge_and_spin(Audit& out, Molecule& m, ValenceResult& valence, const std::optional<int>& multiplicity,
                           const AuditOptions& opt, int unpaired_allowed,
                           const std::set<std::pair<int, int>>& overlapping) {
    const int n = m.atom_count();
    if (!multiplicity) {
        // Without a multiplicity, two electrons short on a divalent centre (a carbene, a silylene) or on a bare
        // group-2 atom are read as the lone pair of a singlet, as the Lewis structure writes them (the domain
        // analysis notes that a carbene may be a triplet). Two electrons short on a bare atom or a monovalent one
        // (O, S, NH) stay unpaired: Hund's rule makes those triplets (common practice).
        for (int i = 0; i < n; ++i) {
            int& u = valence.unpaired[static_cast<size_t>(i)];
            const int deg = m.degree(i);
            if (u == 2 && (deg >= 2 || (deg == 0 && element(m.atoms[static_cast<size_t>(i)].z).group == 2))) {
                valence.total_unpaired -= 2;
                u = 0;
                m.atoms[static_cast<size_t>(i)].radical_electrons = 0;
            }
        }
    }
    check_valences(out, valence, unpaired_allowed, multiplicity.has_value(), overlapping);
    if (valence.charge != out.charge)
        out.findings.push_back({"charge", {},
                                fmt::format("the formal charges add up to {:+d}, but the total charge is {:+d}{}",
                                            valence.charge, out.charge,
                                            opt.charge ? "" : " (give --charge, or check for missing or extra hydrogens)"),
                                valence.charge, out.charge, "", Severity::error, 40});
    {
        std::string charges;
        for (int i = 0; i < n; ++i)
            if (m.atoms[static_cast<size_t>(i)].charge != 0)
                charges += fmt::format(" {}{:+d}", label(m, i), m.atoms[static_cast<size_t>(i)].charge);
        if (!charges.empty() && out.orders_assigned) out.notes.push_back("formal charges assigned:" + charges);
    }
    int electrons = -out.charge;
    for (const Atom& a : m.atoms) electrons += a.z;
    if (multiplicity && (electrons % 2 == 0) != (*multiplicity % 2 == 1))
        out.findings.push_back({"multiplicity", {},
                                fmt::format("{} electrons cannot have multiplicity {} (an {} count needs an {} "
                                            "multiplicity)",
                                            electrons, *multiplicity, electrons % 2 ? "odd" : "even",
                                            electrons % 2 ? "even" : "odd"),
                                *multiplicity, std::nullopt, "", Severity::error, 40});
    out.multiplicity = multiplicity ? *multiplicity : valence.total_unpaired + 1;

}

// Step 2, one centre: its angles against the predicted ones. True when that is a finding.
bool angle_finding(Audit& out, const Molecule& m, const Molecule& skeleton, const std::vector<Eigen::Vector3d>& pos,
                   const CentreDomains& c, int i, const ValenceResult& valence, SmallRingSearch& rings,
                   const AuditOptions& opt) {
        AngleFit fit = fit_angles(skeleton, pos, c, conjugated_nitrogen(skeleton, i, c.lone_pairs + c.delocalised_lone_pairs, c.bonded), rings);
        // A single-electron domain is the model's least certain size (NO2 opens to 134 degrees, CH3 is flat):
        // twice the tolerance at a radical centre.
        // The same next to an atom left with an unpaired electron: where the electron sits in the Lewis
        // structure is a choice (NO2's O=N-O. has it on O; the molecule has most of it on N).
        bool radical_near = c.single_electrons > 0 || valence.unpaired[static_cast<size_t>(i)] > 0;
        for (const Neighbor& nb : skeleton.neighbors(i))
            radical_near = radical_near || valence.unpaired[static_cast<size_t>(nb.atom)] > 0;
        const double threshold = radical_near ? 2 * opt.angle_rms : opt.angle_rms;
        const double worst_threshold = radical_near ? 2 * opt.angle_worst : opt.angle_worst;
        if (fit.pairs > 0 && (fit.rms > threshold || fit.worst > worst_threshold)) {
            const double ratio = std::max(fit.rms / threshold, fit.worst / worst_threshold);
            out.findings.push_back(
                {"geometry", {i + 1},
                 fmt::format("{} ({}, {}{}): its angles deviate from the predicted ones by {:.1f} degrees RMS; "
                             "worst {}-{}-{} measured {:.1f}, predicted {:.1f}",
                             label(m, i), c.axe, c.electron_geometry, c.shape == c.electron_geometry ? "" : " -> " + c.shape,
                             fit.rms, label(m, fit.worst_a), label(m, i), label(m, fit.worst_b), fit.worst_measured,
                             fit.worst_predicted),
                 fit.worst_measured, fit.worst_predicted, "degrees", severity_of(ratio), ratio});
            return true;
        }
    return false;
}

// Step 2, a centre in one three- or four-membered ring. The ring fixes the angle between its two ring bonds, and
// strain opens the others beyond what the isolated centre predicts (cyclopropane's H-C-C 118 degrees, not 109.5), so
// the centre's angles are not fitted. Two things the ring leaves as they are: each substituent lies in the plane that
// bisects the two ring bonds (the ring's mirror plane at the atom: in the sound structures of
// tests/external/check_audit_damage.py its two angles to the ring bonds differ by at most 5.3 degrees, aziridine's),
// and the angle between two substituents is not closed below the model's (the ring's bent bonds open it:
// cyclopropane's H-C-H is 114.6, oxirane's 116, against 110 predicted; repel's own builds reach 121). A tilt, or a
// closing, past two-thirds of the worst-angle threshold (10 degrees by default, twice the sound spread; a cyclopropane
// H turned 20 degrees in the plane H-C-C tilts 14.7 and closes its H-C-H by 12.1) is a finding. Bridgeheads and spiro
// atoms (two ring pairs) are left out. True when that is a finding.
bool small_ring_centre_finding(Audit& out, const Molecule& m, const Molecule& skeleton,
                               const std::vector<Eigen::Vector3d>& pos, const CentreDomains& c, int i,
                               SmallRingSearch& rings, const AuditOptions& opt) {
    const auto& nbs = skeleton.neighbors(i);
    int r1 = -1, r2 = -1, pairs = 0;
    for (size_t a = 0; a < nbs.size(); ++a)
        for (size_t b = a + 1; b < nbs.size(); ++b)
            if (rings.angle_in_ring(nbs[a].atom, i, nbs[b].atom, 4)) {
                r1 = nbs[a].atom;
                r2 = nbs[b].atom;
                ++pairs;
            }
    if (pairs != 1) return false;
    const Eigen::Vector3d& o = pos[static_cast<size_t>(i)];
    auto angle = [&](int a, int b) {
        return angle_deg(pos[static_cast<size_t>(a)] - o, pos[static_cast<size_t>(b)] - o);
    };
    const double threshold = opt.angle_worst * 2.0 / 3.0;
    for (const Neighbor& x : nbs) {
        if (x.atom == r1 || x.atom == r2) continue;
        const double a1 = angle(x.atom, r1), a2 = angle(x.atom, r2), tilt = std::fabs(a1 - a2);
        if (tilt > threshold) {
            const double ratio = tilt / threshold;
            out.findings.push_back(
                {"geometry", {i + 1},
                 fmt::format("{} ({}, in a ring of {}): {} leans toward {}: {}-{}-{} {:.1f} and {}-{}-{} {:.1f} "
                             "degrees, nearly equal when it bisects the two ring bonds",
                             label(m, i), c.axe, rings.ring_through(r1, i, r2, 4).size(), label(m, x.atom),
                             label(m, a1 < a2 ? r1 : r2), label(m, x.atom), label(m, i), label(m, r1), a1,
                             label(m, x.atom), label(m, i), label(m, r2), a2),
                 a1, a2, "degrees", severity_of(ratio), ratio});
            return true;
        }
    }
    for (const PredictedAngle& p : c.angles) {
        if (p.a == r1 || p.a == r2 || p.b == r1 || p.b == r2) continue;
        if (skeleton.bond_between(i, p.a) < 0 || skeleton.bond_between(i, p.b) < 0) continue;
        const double measured = angle(p.a, p.b), dev = p.degrees - measured;
        if (dev > threshold) {
            const double ratio = dev / threshold;
            out.findings.push_back(
                {"geometry", {i + 1},
                 fmt::format("{} ({}, in a ring of {}): {}-{}-{} is {:.1f} degrees, closed below the predicted "
                             "{:.1f} (the ring opens it)", label(m, i),
                             c.axe, rings.ring_through(r1, i, r2, 4).size(), label(m, p.a), label(m, i),
                             label(m, p.b), measured, p.degrees),
                 measured, p.degrees, "degrees", severity_of(ratio), ratio});
            return true;
        }
    }
    return false;
}

// Step 2, one centre: a tetrahedral centre drawn flat. True when that is a finding.
bool flat_tetrahedron_finding(Audit& out, const Molecule& m, const Molecule& skeleton,
                              const std::vector<Eigen::Vector3d>& pos, const CentreDomains& c, int i) {
        // A tetrahedral centre (four bonds, no lone pair) with three neighbours nearly coplanar with it (a CH3
        // drawn flat against its C-X bond) can keep its RMS under the threshold (90 and 120 against 109.5):
        // the triple product of three bond directions is 0.770 in a regular tetrahedron, 0 when flat.
        if (c.bonded == 4 && c.steric_number == 4) {
            const auto& nbs = skeleton.neighbors(i);
            const Eigen::Vector3d& o = pos[static_cast<size_t>(i)];
            double flattest = 1;
            int fa = -1, fb = -1, fc = -1;
            for (int a = 0; a < 4; ++a)
                for (int b = a + 1; b < 4; ++b)
                    for (int e = b + 1; e < 4; ++e) {
                        const int x = nbs[static_cast<size_t>(a)].atom, y = nbs[static_cast<size_t>(b)].atom,
                                  z = nbs[static_cast<size_t>(e)].atom;
                        const Eigen::Vector3d u = (pos[static_cast<size_t>(x)] - o).normalized();
                        const Eigen::Vector3d v = (pos[static_cast<size_t>(y)] - o).normalized();
                        const Eigen::Vector3d w = (pos[static_cast<size_t>(z)] - o).normalized();
                        const double t = std::fabs(u.dot(v.cross(w)));
                        if (t < flattest) {
                            flattest = t;
                            fa = x;
                            fb = y;
                            fc = z;
                        }
                    }
            if (flattest < kFlatTetrahedron) {
                const double ratio = 2.0 * (kFlatTetrahedron - flattest) / kFlatTetrahedron + 1.0;
                out.findings.push_back(
                    {"geometry", {i + 1},
                     fmt::format("{} ({}, tetrahedral) is drawn flat: {}, {} and {} lie almost in one plane with "
                                 "it (triple product of the bond directions {:.2f}; 0.77 when tetrahedral)",
                                 label(m, i), c.axe, label(m, fa), label(m, fb), label(m, fc), flattest),
                     flattest, 0.770, "", severity_of(ratio), ratio});
                return true;
            }
        }
    return false;
}

// Step 2, one centre: a pyramidal centre drawn flat. True when that is a finding.
bool flat_pyramid_finding(Audit& out, const Molecule& m, const Molecule& skeleton, const std::vector<Eigen::Vector3d>& pos,
                          const CentreDomains& c, int i) {
        // A pyramidal centre (three bonds and a lone pair of its own: an amine N, a phosphine, a sulfoxide S)
        // drawn flat: the RMS against the pyramid's angles (107 against 120 degrees) stays under the threshold.
        // Sound pyramids sum to 300-345 degrees (NH3 about 320, trimethylamine about 333; conjugated N, which may
        // be flat, are left out); a sum above kFlatPyramid is a finding.
        // A donor on a metal is left out: its geometry towards the metal is soft (coordinated water runs from
        // pyramidal to flat; GFN2-xTB's [Fe(H2O)6]2+ has it flat).
        bool on_metal = false;
        for (const Neighbor& nb : skeleton.neighbors(i)) {
            const int zn = m.atoms[static_cast<size_t>(nb.atom)].z;
            on_metal = on_metal || is_d_block_metal(zn) || (zn != 1 && element(zn).group <= 2);
            // A nitroxide N shares the O's odd electron (a three-electron pi bond): nearly flat (TEMPO's GFN2-xTB
            // optimum sums to 357 degrees, tests/external/check_xtb_maingroup.py).
            on_metal = on_metal || (zn == 8 && m.atoms[static_cast<size_t>(nb.atom)].radical_electrons > 0);
        }
        if (c.bonded == 3 && c.steric_number == 4 && c.lone_pairs == 1 && c.delocalised_lone_pairs == 0 &&
            !on_metal && !conjugated_nitrogen(skeleton, i, c.lone_pairs + c.delocalised_lone_pairs, c.bonded)) {
            const auto& nbs = skeleton.neighbors(i);
            const Eigen::Vector3d& o = pos[static_cast<size_t>(i)];
            double sum = 0;
            for (int a = 0; a < 3; ++a)
                for (int b = a + 1; b < 3; ++b)
                    sum += angle_deg(pos[static_cast<size_t>(nbs[static_cast<size_t>(a)].atom)] - o,
                                     pos[static_cast<size_t>(nbs[static_cast<size_t>(b)].atom)] - o);
            if (sum > kFlatPyramid) {
                const double ratio = 1.0 + (sum - kFlatPyramid) / (360.0 - kFlatPyramid);
                out.findings.push_back(
                    {"geometry", {i + 1},
                     fmt::format("{} ({}, {}) is drawn flat: its three angles sum to {:.1f} degrees, a pyramid's "
                                 "to well under 360",
                                 label(m, i), c.axe, c.shape, sum),
                     sum, kFlatPyramid, "degrees", severity_of(ratio), ratio});
                return true;
            }
        }
    return false;
}

// Step 2, one centre: a trigonal planar centre drawn pyramidal.
void pyramidal_trigonal_finding(Audit& out, const Molecule& m, const Molecule& skeleton,
                                const std::vector<Eigen::Vector3d>& pos, const CentreDomains& c, int i,
                                SmallRingSearch& rings, const AuditOptions& opt) {
        // An sp2-like centre (three bonds, no lone pair) must be flat; the RMS alone misses a mild pyramid. A radical
        // centre with its electron in the p orbital is left out: it is reported as a radical, and a pyramid there
        // is more often a missing hydrogen than a wrong shape.
        if (c.bonded == 3 && c.steric_number == 3 && c.p_single_electrons == 0) {
            const auto& nbs = skeleton.neighbors(i);
            const Eigen::Vector3d& o = pos[static_cast<size_t>(i)];
            double sum = 0;
            bool ring = false;
            for (int a = 0; a < 3; ++a)
                for (int b = a + 1; b < 3; ++b) {
                    sum += angle_deg(pos[static_cast<size_t>(nbs[static_cast<size_t>(a)].atom)] - o,
                                     pos[static_cast<size_t>(nbs[static_cast<size_t>(b)].atom)] - o);
                    ring = ring || rings.angle_in_ring(nbs[static_cast<size_t>(a)].atom, i,
                                                       nbs[static_cast<size_t>(b)].atom, 4);
                }
            // An amino N whose pair is shared with a C=C, C=N or an aromatic ring (aniline, enamine, the NH2 of
            // a neutral guanidine or amidine) is only partly flattened: aniline's NH2 is pyramidal, its angles
            // summing to about 343 degrees in the gas phase (from memory); amides stay flat. Twice the tolerance.
            double tolerance = opt.planarity;
            if (m.atoms[static_cast<size_t>(i)].z == 7 && c.delocalised_lone_pairs > 0) {
                bool amide = false, has_h = false;
                for (const Neighbor& nb : skeleton.neighbors(i)) {
                    has_h = has_h || m.atoms[static_cast<size_t>(nb.atom)].z == 1;
                    for (const Neighbor& nn : skeleton.neighbors(nb.atom)) {
                        const int zz = m.atoms[static_cast<size_t>(nn.atom)].z;
                        if (nn.atom != i && skeleton.bonds[static_cast<size_t>(nn.bond)].order >= 2 &&
                            (zz == 8 || zz == 16))
                            amide = true;
                    }
                }
                if (has_h && !amide) tolerance = 2 * opt.planarity;
            }
            if (!ring && sum < 360.0 - tolerance) {
                const double ratio = (360.0 - sum) / tolerance;
                out.findings.push_back(
                    {"planarity", {i + 1},
                     fmt::format("{} ({}, trigonal planar) is pyramidal: its three angles sum to {:.1f} degrees, "
                                 "not 360",
                                 label(m, i), c.axe, sum),
                     sum, 360.0, "degrees", severity_of(ratio), ratio});
            }
        }
}

// Step 3: bond lengths against the analysis' lengths corrected by kind of bond, metal bonds against the metal model.
void judge_bond_lengths(Audit& out, const Molecule& m, const std::vector<Eigen::Vector3d>& pos, const AuditOptions& opt,
                        const std::vector<char>& excluded, const std::vector<double>& metal_length,
                        std::vector<double> model_length) {
    model_length = corrected_lengths(m, model_length);
    for (size_t e = 0; e < m.bonds.size(); ++e) {
        const Bond& b = m.bonds[e];
        if (excluded[static_cast<size_t>(b.a)] || excluded[static_cast<size_t>(b.b)]) continue;
        const int za = m.atoms[static_cast<size_t>(b.a)].z, zb = m.atoms[static_cast<size_t>(b.b)].z;
        if (is_d_block_metal(za) || is_d_block_metal(zb)) {
            // Against the model's metal-ligand (or metal-metal) length; none without the metal analysis.
            const double target = metal_length[e];
            if (target <= 0) continue;
            const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
            const double dev = measured - target;
            if (std::fabs(dev) <= opt.metal_bond_deviation) continue;
            const double ratio = std::fabs(dev) / opt.metal_bond_deviation;
            const bool both = is_d_block_metal(za) && is_d_block_metal(zb);
            out.findings.push_back({"bond length", {b.a + 1, b.b + 1},
                                    fmt::format("{}-{} {} bond is {:.3f} A, {:.2f} A too {} (expected {:.3f} A)",
                                                label(m, b.a), label(m, b.b), both ? "metal-metal" : "metal-ligand",
                                                measured, std::fabs(dev), dev > 0 ? "long" : "short", target),
                                    measured, target, "angstrom", severity_of(ratio), ratio});
            continue;
        }
        const double expected = model_length[e] > 0 ? model_length[e]
                                                    : bond_length(za, zb, std::clamp(b.order, 1, 3), b.aromatic);
        const double measured = (pos[static_cast<size_t>(b.a)] - pos[static_cast<size_t>(b.b)]).norm();
        const double dev = measured - expected;
        // Bonds between atoms of the first two periods (H to Ne, the alkali and alkaline-earth metals aside) against
        // the model's length: opt.bond_deviation. Others (heavier atoms, ionic Li/Be bonds, or no model length but
        // the table's) spread twice as far (audit.hpp has the measured spreads).
        auto light = [](int z) { return z == 1 || (z <= 10 && element(z).group != 1 && element(z).group != 2); };
        const bool tight = model_length[e] > 0 && light(za) && light(zb);
        // Too short is judged tighter than too long: a compressed bond costs more energy than a stretched one (the
        // Morse curve is steeper inside the minimum), and sound structures spread less that way (audit.hpp). Not in
        // an open-shell molecule, whose written orders are one of several resonance forms (GFN2-xTB's triplet
        // phenylnitrene has a ring C-C written single 0.095 A short: tests/external/check_xtb_maingroup.py).
        const bool shorter_tolerance = dev < 0 && out.multiplicity == 1;
        const double factor = shorter_tolerance ? (tight ? kShortBondFactor : kHeavyShortBondFactor)
                                                : (tight ? 1.0 : kHeavyBondFactor);
        const double threshold = factor * opt.bond_deviation;
        if (std::fabs(dev) <= threshold) continue;
        const double ratio = std::fabs(dev) / threshold;
        static const char* kOrder[] = {"", "single", "double", "triple"};
        out.findings.push_back({"bond length", {b.a + 1, b.b + 1},
                                fmt::format("{}-{} {} bond is {:.3f} A, {:.2f} A too {} (expected {:.3f} A)",
                                            label(m, b.a), label(m, b.b),
                                            b.aromatic ? "aromatic" : kOrder[std::clamp(b.order, 1, 3)], measured,
                                            std::fabs(dev), dev > 0 ? "long" : "short", expected),
                                measured, expected, "angstrom", severity_of(ratio), ratio});
    }

}

// Step 4: contacts between atoms neither bonded nor sharing a neighbour, through a cell grid.
void judge_contacts(Audit& out, const Molecule& m, const std::vector<Eigen::Vector3d>& pos, const AuditOptions& opt,
                    const std::vector<char>& excluded, const std::set<std::pair<int, int>>& overlapping) {
    const int n = m.atom_count();
    {
        double vmax = 0;
        for (const Atom& a : m.atoms) vmax = std::max(vmax, element(a.z).r_vdw);
        const double reach = opt.contact_fraction * 2 * vmax;
        if (n > 1 && reach > 0) {
            const double cell = std::max(reach, 0.5);
            NeighborGrid grid(cell);
            for (int i = 0; i < n; ++i) grid.insert(i, pos[static_cast<size_t>(i)]);
            std::set<std::pair<int, int>> seen;  // each pair reported once
            for (int i = 0; i < n; ++i)
                grid.for_each_near(pos[static_cast<size_t>(i)], [&](int j) {
                    if (j <= i || excluded[static_cast<size_t>(j)] || excluded[static_cast<size_t>(i)]) return;
                    const double rv = element(m.atoms[static_cast<size_t>(i)].z).r_vdw +
                                      element(m.atoms[static_cast<size_t>(j)].z).r_vdw;
                    const double d = (pos[static_cast<size_t>(i)] - pos[static_cast<size_t>(j)]).norm();
                    if (rv <= 0 || d >= opt.contact_fraction * rv) return;
                    if (m.bond_between(i, j) >= 0) return;
                    for (const Neighbor& nb : m.neighbors(i))
                        if (m.bond_between(nb.atom, j) >= 0) return;  // 1-3 pairs are angles, not contacts
                    if (overlapping.count({i, j}) || !seen.emplace(i, j).second) return;
                    if (hydrogen_bond(m, i, j, d)) return;
                    const double ratio = (opt.contact_fraction * rv - d) / (0.1 * rv) + 1;
                    out.findings.push_back(
                        {"contact", {i + 1, j + 1},
                         fmt::format("{} and {} are {:.2f} A apart, closer than {:.0f}% of their van der "
                                     "Waals contact ({:.2f} A)",
                                     label(m, i), label(m, j), d, 100 * opt.contact_fraction, rv),
                         d, opt.contact_fraction * rv, "angstrom", severity_of(ratio), ratio});
                });
        }
    }

}

}  // namespace

Audit audit_structure(const ReadStructure& in, const AuditOptions& opt) {
    const ScopedDeadline deadline(opt.time_limit);
    Audit out;
    out.title = in.title;
    out.line = in.line;
    out.structure = in.structure;
    Molecule& m = out.structure.molecule;
    const auto& pos = out.structure.positions;
    const int n = m.atom_count();
    out.charge = opt.charge ? *opt.charge : in.has_charge ? in.structure.charge : 0;
    std::optional<int> multiplicity = opt.multiplicity;
    if (!multiplicity && in.has_multiplicity) multiplicity = in.structure.multiplicity;
    out.charge_given = opt.charge.has_value() || in.has_charge;
    out.multiplicity_given = multiplicity.has_value();
    const int unpaired_allowed = multiplicity ? *multiplicity - 1 : 0;

    // 1. What the file does not state.
    std::vector<char> excluded(static_cast<size_t>(n), 0);
    std::set<std::pair<int, int>> overlapping;  // pairs reported as overlaps (0-based, a < b): not contacts again
    if (!in.has_bonds) overlapping = perceive_and_report_overlaps(out, m, pos, opt, excluded);
    check_deadline("perceiving bonds");
    ValenceResult valence = orders_and_charges(out, in, m, pos, opt, unpaired_allowed, excluded);
    mark_aromatic_rings(m, excluded);
    check_deadline("perceiving aromatic rings");
    judge_charge_and_spin(out, m, valence, multiplicity, opt, unpaired_allowed, overlapping);

    // 2. The centres against the domain analysis. Atoms with impossible valences lose their bonds in this copy
    //    (so that the analysis can run), and neither they nor their neighbours are judged.
    Molecule analysed = m;
    std::vector<char> skip = excluded;
    {
        std::vector<Bond> kept;
        for (const Bond& b : analysed.bonds) {
            if (excluded[static_cast<size_t>(b.a)] || excluded[static_cast<size_t>(b.b)]) {
                skip[static_cast<size_t>(b.a)] = skip[static_cast<size_t>(b.b)] = 1;
                continue;
            }
            kept.push_back(b);
        }
        analysed.set_bonds(std::move(kept));
        for (Atom& a : analysed.atoms) a.hydrogens = 0;
    }
    // Per bond of m: the model's length of a bond to a d-block metal (0: not such a bond, or no analysis).
    std::vector<double> metal_length(m.bonds.size(), 0.0);
    // Per bond of m: the analysis' length (the one the build and --fix aim at: aromatic and resonance-shared orders,
    // the hybridisation at each end); 0 where there is no analysis.
    std::vector<double> model_length(m.bonds.size(), 0.0);
    try {
        MoleculeDomains d = analyse_domains(analysed);
        for (size_t e = 0; e < analysed.bonds.size(); ++e) {
            const Bond& b = analysed.bonds[e];
            const int k = m.bond_between(b.a, b.b);
            if (k < 0 || e >= d.bond_lengths.size()) continue;
            model_length[static_cast<size_t>(k)] = d.bond_lengths[e];
            if (!is_d_block_metal(analysed.atoms[static_cast<size_t>(b.a)].z) &&
                !is_d_block_metal(analysed.atoms[static_cast<size_t>(b.b)].z))
                continue;
            metal_length[static_cast<size_t>(k)] = d.bond_lengths[e];
        }
        // The angles at ligand atoms are judged without the bonds of hapto ligands (a ring carbon of a
        // cyclopentadienyl has its three sigma domains; the metal is not one of them).
        const Molecule skeleton = without_hapto_bonds(analysed, d.metals);
        const bool any_excluded = std::find(excluded.begin(), excluded.end(), 1) != excluded.end();
        if (!multiplicity && !any_excluded) out.multiplicity = std::max(out.multiplicity, d.multiplicity);
        for (const std::string& w : d.warnings) out.notes.push_back(w);
        SmallRingSearch rings(skeleton);
        for (int i = 0; i < n; ++i) {
            if (skip[static_cast<size_t>(i)]) continue;
            const CentreDomains& c = d.atoms[static_cast<size_t>(i)];
            if (!d.metals.empty() && d.metals.centre_of_atom[static_cast<size_t>(i)] >= 0) {
                check_metal_centre(out, d.metals.centres[static_cast<size_t>(d.metals.centre_of_atom[static_cast<size_t>(i)])],
                                   pos, opt);
                continue;
            }
            if (c.bonded < 2 || c.angles.empty()) continue;
            if (rings.atom_in_ring(i, 4)) {
                small_ring_centre_finding(out, m, skeleton, pos, c, i, rings, opt);
                continue;
            }
            if (angle_opened_by_neighbours(skeleton, i, c)) continue;
            // Two unpaired electrons (a triplet carbene) count as a lone pair in the Lewis structure: no prediction.
            if (valence.unpaired[static_cast<size_t>(i)] >= 2) continue;
            if (angle_finding(out, m, skeleton, pos, c, i, valence, rings, opt)) continue;
            if (flat_tetrahedron_finding(out, m, skeleton, pos, c, i)) continue;
            if (flat_pyramid_finding(out, m, skeleton, pos, c, i)) continue;
            pyramidal_trigonal_finding(out, m, skeleton, pos, c, i, rings, opt);
        }
    } catch (const UnsupportedError& e) {
        out.notes.push_back(std::string("no shape check: ") + e.what());
    } catch (const InputError& e) {
        out.notes.push_back(std::string("no shape check: ") + e.what());
    }

    // 3. Bond lengths, against the analysis' lengths corrected by kind of bond (expected_length.hpp).
    judge_bond_lengths(out, m, pos, opt, excluded, metal_length, model_length);

    // 4. Contacts between atoms neither bonded nor sharing a neighbour, through a cell grid.
    judge_contacts(out, m, pos, opt, excluded, overlapping);

    // 5. The intended molecule.
    if (!opt.reference_smiles.empty())
        for (Finding& f : compare_with_reference(m, pos, read_smiles(opt.reference_smiles)))
            out.findings.push_back(std::move(f));

    std::stable_sort(out.findings.begin(), out.findings.end(), [](const Finding& a, const Finding& b) {
        if (a.severity != b.severity) return a.severity == Severity::error;
        return a.badness > b.badness;
    });
    out.structure.charge = out.charge;
    out.structure.multiplicity = out.multiplicity;
    return out;
}

}  // namespace repel
