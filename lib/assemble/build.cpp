#include "assemble/build.hpp"

#include <algorithm>
#include <cmath>
#include <optional>
#include <fmt/format.h>

#include "assemble/assemble.hpp"
#include "assemble/components.hpp"
#include "assemble/hapto.hpp"
#include "core/neighbor_grid.hpp"
#include "assemble/ring_embed.hpp"
#include "graph/rings.hpp"
#include "graph/stereo.hpp"
#include "core/element.hpp"
#include "core/error.hpp"
#include "domains/domains.hpp"
#include "refine/refine.hpp"

namespace repel {

using Eigen::Vector3d;

namespace {

// Two atoms more than two bonds apart closer than this are on top of each other: the structure is refused
// (Angstrom; common practice: far below any bond).
constexpr double kOverlapDistance = 0.5;
// Closer than this fraction of the sum of van der Waals radii (and more than three bonds apart) is a close contact
// worth a warning (common practice).
constexpr double kContactWarningFraction = 0.5;
// A ring angle this far (degrees) from its centre's domain angle marks a strained bridged or caged ring system
// (common practice; cubane's 90-degree angles are 18 degrees from the tetrahedral frame, norbornane's tightest about
// 15, adamantane's none).
constexpr double kStrainWarningDegrees = 17.0;
// How many outliers a warning names.
constexpr size_t kOutliersNamed = 4;

bool within_bonds(const Molecule& m, int a, int b, int depth) {
    if (a == b) return true;
    if (depth == 0) return false;
    for (const Neighbor& n : m.neighbors(a))
        if (within_bonds(m, n.atom, b, depth - 1)) return true;
    return false;
}

struct Contact {
    int a = -1, b = -1;
    double distance = 0, fraction = 0;  // fraction of the van der Waals sum
};

// The closest pair more than two bonds apart (by distance), and the closest more than three bonds apart (by fraction
// of the van der Waals sum); found through a neighbour grid.
void closest_contacts(const Molecule& m, const std::vector<Vector3d>& pos, Contact* nearest, Contact* tightest) {
    double max_vdw = 0;
    for (const Atom& a : m.atoms) max_vdw = std::max(max_vdw, element(a.z).r_vdw);
    NeighborGrid grid(std::max(2 * max_vdw * kContactWarningFraction, kOverlapDistance));
    for (int i = 0; i < m.atom_count(); ++i) grid.insert(i, pos[static_cast<size_t>(i)]);
    for (int i = 0; i < m.atom_count(); ++i) {
        grid.for_each_near(pos[static_cast<size_t>(i)], [&](int j) {
            if (j <= i) return;
            const double d = (pos[static_cast<size_t>(i)] - pos[static_cast<size_t>(j)]).norm();
            const double sum = element(m.atoms[static_cast<size_t>(i)].z).r_vdw + element(m.atoms[static_cast<size_t>(j)].z).r_vdw;
            if (d >= sum * kContactWarningFraction && d >= kOverlapDistance) return;
            if (within_bonds(m, i, j, 2)) return;
            if (nearest->a < 0 || d < nearest->distance) *nearest = {i, j, d, d / sum};
            if (!within_bonds(m, i, j, 3) && (tightest->a < 0 || d / sum < tightest->fraction))
                *tightest = {i, j, d, d / sum};
        });
    }
}

// The final self-check: the refinement's outliers (bonds and angles far from their targets) as one warning naming
// them, so that a distorted structure is never written without a word. Angles at the atoms of a ring system that
// already carries a warning (strained, or its ring geometry missed) are left out: that warning has said it; so are
// angles at the atoms of three- and four-membered rings (what such a ring forces, see below).
void self_check(const RingInfo& rings, const std::vector<char>& warned_system,
                const std::vector<GeometryOutlier>& outliers, const BuildOptions& options,
                std::vector<std::string>& warnings) {
    if (outliers.empty()) return;
    // Centres in a three- or four-membered ring: the ring's 60 or 90 degrees push their other angles open by as much
    // as the ring forces (spiropentane's 137 degrees between its rings, against 109.5).
    std::vector<char> small_ring(rings.atom_system.size(), 0);
    for (const auto& ring : rings.rings)
        if (ring.size() <= 4)
            for (int a : ring) small_ring[static_cast<size_t>(a)] = 1;
    std::vector<std::string> named;
    size_t count = 0;
    for (const GeometryOutlier& o : outliers) {
        const bool angle = o.c >= 0;
        if (angle) {
            const int sys = rings.atom_system[static_cast<size_t>(o.b)];
            if ((sys >= 0 && warned_system[static_cast<size_t>(sys)]) || small_ring[static_cast<size_t>(o.b)]) continue;
        }
        ++count;
        if (named.size() < kOutliersNamed)
            named.push_back(angle ? fmt::format("angle {}-{}-{} {:.0f} degrees (target {:.0f})", o.a + 1, o.b + 1,
                                                o.c + 1, o.value, o.target)
                                  : fmt::format("bond {}-{} {:.2f} A (target {:.2f})", o.a + 1, o.b + 1, o.value,
                                                o.target));
    }
    if (count == 0) return;
    std::string list;
    for (const std::string& x : named) list += (list.empty() ? "" : ", ") + x;
    warnings.push_back(fmt::format("distorted geometry: {} bond(s) more than {:.2f} A or angle(s) more than {:.0f} "
                                   "degrees from their targets ({}{}); check the structure with a quantum-chemistry "
                                   "optimisation",
                                   count, options.bond_outlier, options.angle_outlier, list, count > named.size() ? ", ..." : ""));
}

// The analysis of the skeleton with a target length for every bond of the whole molecule (the skeleton's bonds are the
// molecule's without those of hapto ligands, in the same order).
MoleculeDomains with_bond_lengths_of(const Molecule& molecule, const MoleculeDomains& skeleton_domains) {
    MoleculeDomains d = skeleton_domains;
    d.bond_lengths.clear();
    d.bond_lengths.reserve(molecule.bonds.size());
    size_t k = 0;
    const MetalAnalysis& ma = skeleton_domains.metals;
    for (const Bond& b : molecule.bonds) {
        double hapto_length = 0;
        for (int side = 0; side < 2 && hapto_length == 0; ++side) {
            const int metal = side == 0 ? b.a : b.b, other = side == 0 ? b.b : b.a;
            const int c = ma.centre_of_atom[static_cast<size_t>(metal)];
            if (c < 0 || !ma.hapto_atom[static_cast<size_t>(other)]) continue;
            for (const LigandDomain& l : ma.centres[static_cast<size_t>(c)].ligands)
                if (l.hapto() && std::find(l.atoms.begin(), l.atoms.end(), other) != l.atoms.end()) hapto_length = l.length;
        }
        if (hapto_length > 0) d.bond_lengths.push_back(hapto_length);
        else d.bond_lengths.push_back(skeleton_domains.bond_lengths[k++]);
    }
    return d;
}

// The frame of a metal centre with hapto ligands as assembled, held in the refinement: distances from each hapto
// atom to the other ligands' atoms of the same metal (a hapto domain has no angle terms; without these the rings
// and the other ligands would drift round the metal, held only by their bonds to it and the contacts).
std::vector<DistanceRestraint> hapto_frame_restraints(const Molecule& skeleton, const MetalAnalysis& metals,
                                                      const std::vector<Vector3d>& placed,
                                                      const std::vector<std::optional<Vector3d>>& site_shift) {
    // Measured as if every hapto ligand sat on its site (chelating dienes are moved whole and may sit off theirs).
    std::vector<Vector3d> pos = placed;
    for (size_t i = 0; i < pos.size() && i < site_shift.size(); ++i)
        if (site_shift[i]) pos[i] += *site_shift[i];
    constexpr double kWeight = 0.5;  // half a bond's stiffness: the frame is a target, not a bond (common practice)
    std::vector<DistanceRestraint> out;
    for (const MetalCentre& c : metals.centres) {
        for (size_t l = 0; l < c.ligands.size(); ++l) {
            if (!c.ligands[l].hapto()) continue;
            for (size_t o = 0; o < c.ligands.size(); ++o) {
                if (o == l || (c.ligands[o].hapto() && o < l)) continue;
                for (int a : c.ligands[l].atoms)
                    for (int b : c.ligands[o].atoms)
                        out.push_back({a, b, (pos[static_cast<size_t>(a)] - pos[static_cast<size_t>(b)]).norm(), kWeight});
            }
            // A ligand moved with its piece (a chelating diene) is not laid flat towards the metal: its hydrogens
            // are held bent away, at a metal-carbon-hydrogen angle of 110 degrees (coordinated alkenes' substituents
            // bend back from the metal; common practice).
            bool shifted = false;
            for (int a : c.ligands[l].atoms)
                shifted = shifted || (static_cast<size_t>(a) < site_shift.size() && site_shift[static_cast<size_t>(a)]);
            if (!shifted) continue;
            constexpr double kBentAway = 0.1;  // soft: a stiffer hold tears the ring as it turns (tried: 0.5)
            // cos 110 degrees: a flat alkene facing the metal has M-C-H near 100; its hydrogens bend back about 10
            // degrees more (common practice)
            const double kCosMetalCarbonHydrogen = std::cos(110.0 * M_PI / 180.0);
            for (int a : c.ligands[l].atoms)
                for (const Neighbor& nb : skeleton.neighbors(a)) {
                    // Hydrogens only: the ring's own atoms are placed by the ring (a chelate's bite bends them in).
                    if (skeleton.atoms[static_cast<size_t>(nb.atom)].z != 1) continue;
                    const double l1 = c.ligands[l].length;
                    const double l2 = (placed[static_cast<size_t>(nb.atom)] - placed[static_cast<size_t>(a)]).norm();
                    out.push_back({c.atom, nb.atom, std::sqrt(l1 * l1 + l2 * l2 - 2 * l1 * l2 * kCosMetalCarbonHydrogen), kBentAway});
                }
        }
    }
    return out;
}

// The charge and multiplicity asked for, checked against the written structure (BuildOptions::charge, multiplicity).
void apply_charge_and_multiplicity(const Molecule& molecule, const MoleculeDomains& domains, const BuildOptions& options,
                                   Structure& s) {
    if (options.charge && *options.charge != domains.charge)
        throw InputError(fmt::format("total charge {} was asked for, but the written formal charges add up to {}; write "
                                     "the charges on the atoms (e.g. [NH4+], [O-])",
                                     *options.charge, domains.charge));
    if (options.multiplicity) {
        long electrons = -domains.charge;
        for (const Atom& a : molecule.atoms) electrons += a.z;
        const long unpaired = static_cast<long>(*options.multiplicity) - 1;
        if (*options.multiplicity < 1)
            throw InputError(fmt::format("multiplicity {} is not possible: it is 2S+1, at least 1", *options.multiplicity));
        if (unpaired > electrons || (electrons - unpaired) % 2 != 0)
            throw InputError(fmt::format(
                "multiplicity {} is not possible for {} electrons: it needs {} unpaired electrons, and an {} electron "
                "count allows only {} multiplicities ({}){}",
                *options.multiplicity, electrons, unpaired, electrons % 2 == 0 ? "even" : "odd",
                electrons % 2 == 0 ? "odd" : "even", electrons % 2 == 0 ? "1, 3, 5, ..." : "2, 4, 6, ...",
                unpaired > electrons ? fmt::format("; at most {}", electrons + 1) : ""));
        if (*options.multiplicity != domains.multiplicity) {
            // The analysis's own ground-state warnings no longer hold; say what was written instead.
            std::erase_if(s.warnings, [](const std::string& w) {
                return w.find("multiplicity raised by") != std::string::npos ||
                       w.find("written high-spin") != std::string::npos;
            });
            s.warnings.push_back(fmt::format("multiplicity {} as asked for (the Lewis structure as written gives {}); the "
                                             "coordinates are those of the structure as written",
                                             *options.multiplicity, domains.multiplicity));
        }
        s.multiplicity = *options.multiplicity;
        s.multiplicity_reason = "as asked";
    }
}

// The stereo marks placed in 3D: a target per mark the skeleton can carry; the rest are said in warnings.
std::vector<ChiralTarget> placed_chiral_targets(const Molecule& molecule, const Molecule& skeleton,
                                                const MoleculeDomains& domains, std::vector<std::string>& warnings) {
    std::vector<ChiralTarget> chiral;
    for (const ChiralTarget& t : chiral_targets(molecule, warnings)) {
        const CentreDomains& c = domains.atoms[static_cast<size_t>(t.centre)];
        // A metal centre whose analysis did not place the ligands by the mark (warned there), and a mark whose
        // neighbours include hapto-bonded atoms (no longer bonded in the skeleton being assembled): no target.
        const int mc = domains.metals.centre_of_atom.empty() ? -1
                                                              : domains.metals.centre_of_atom[static_cast<size_t>(t.centre)];
        if (mc >= 0) {
            const std::string& note = domains.metals.centres[static_cast<size_t>(mc)].stereo_note;
            if (!note.empty() && !note.starts_with("ligands placed")) continue;
        }
        const bool allene = is_allene_target(molecule, t);  // its atoms are the ends' substituents
        if (!allene && (skeleton.bond_between(t.centre, t.n1) < 0 || skeleton.bond_between(t.centre, t.n2) < 0 ||
                        skeleton.bond_between(t.centre, t.n3) < 0))
            continue;
        // Three neighbours and no lone pair: a planar centre (a carbocation, a borane) has no handedness.
        if (!allene && c.bonded == 3 && c.lone_pairs + c.single_electrons == 0)
            warnings.push_back(fmt::format("stereo mark on atom {} not applied: the centre is planar (three "
                                             "neighbours, no lone pair)",
                                             t.centre + 1));
        else
            chiral.push_back(t);
    }
    return chiral;
}

// A ring system's strain and missed conditions said in warnings, and marked in `warned`.
void note_ring_system(const std::vector<int>& atoms, const RingSystemEmbedding& e, char& warned,
                      std::vector<std::string>& warnings) {
    if (e.worst_angle_strain > kStrainWarningDegrees || !e.satisfied) warned = 1;
    if (e.worst_angle_strain > kStrainWarningDegrees)
        warnings.push_back(fmt::format(
            "strained ring system (atoms {}..{}, {} atoms): ring angles up to {:.0f} degrees from the domain "
            "angles; check the geometry with a quantum-chemistry optimisation",
            atoms.front() + 1, atoms.back() + 1, atoms.size(), e.worst_angle_strain));
    if (!e.satisfied)
        warnings.push_back(fmt::format("ring system (atoms {}..{}, {} atoms) could not be given its ideal ring "
                                         "geometry (bond, angle or torsion targets missed); check it with a "
                                         "quantum-chemistry optimisation",
                                         atoms.front() + 1, atoms.back() + 1, atoms.size()));
}

// The last checks of a built structure: overlapping atoms refuse it, the closest contact is said, and a non-finite
// coordinate is a bug.
void final_checks(const Molecule& molecule, Structure& s) {
    Contact nearest, tightest;
    closest_contacts(molecule, s.positions, &nearest, &tightest);
    if (nearest.a >= 0 && nearest.distance < kOverlapDistance)
        throw UnsupportedError(fmt::format("could not build a structure without overlapping atoms: atoms {} and {} "
                                           "end up {:.2f} A apart",
                                           nearest.a + 1, nearest.b + 1, nearest.distance));
    if (tightest.a >= 0)
        s.warnings.push_back(fmt::format("close contact: atoms {} and {} are {:.2f} A apart ({:.0f}% of their van der "
                                         "Waals contact)",
                                         tightest.a + 1, tightest.b + 1, tightest.distance, 100 * tightest.fraction));
    for (const Vector3d& p : s.positions)
        if (!p.allFinite()) throw std::logic_error("assembly produced a non-finite coordinate");
}

}  // namespace

// What building one molecule needs beyond the molecule itself, worked out once (StructureBuilder).
struct StructureBuilder::Analysis {
    BuildOptions options;
    Molecule molecule;  // as written, or with separated sandwich ions joined
    std::vector<std::string> join_notes;
    MetalAnalysis metals;
    bool hapto = false;
    Molecule skeleton;  // without the bonds of hapto ligands (hapto only)
    MoleculeDomains domains;
    MoleculeDomains refine_domains;  // with a length for every bond of the whole molecule (hapto only)
    std::vector<ChiralTarget> chiral, centre_targets;
    std::vector<DoubleBondTarget> double_bonds;
    RingInfo rings;
    Structure base;  // charge, multiplicity, warnings of the analysis; the molecule with its single electrons

    const Molecule& frame() const { return hapto ? skeleton : molecule; }
    const MoleculeDomains& refined_domains() const { return hapto ? refine_domains : domains; }
};

StructureBuilder::StructureBuilder(const Molecule& written, const BuildOptions& options)
    : a_(std::make_unique<Analysis>()) {
    Analysis& a = *a_;
    a.options = options;
    // Metallocenes written as separate ions are joined into the sandwich they are (metal.hpp).
    a.molecule = written;
    for (const Atom& atom : written.atoms)
        if (is_transition_metal(atom.z)) {
            join_separated_sandwich_ions(a.molecule, a.join_notes);
            break;
        }
    const Molecule& molecule = a.molecule;
    const int n = molecule.atom_count();
    if (n == 0) throw InputError("nothing to build: the molecule has no atoms");
    for (const Atom& atom : molecule.atoms)
        if (atom.hydrogens > 0)
            throw std::logic_error("build_structure needs explicit hydrogens (Molecule::make_hydrogens_explicit)");

    // Metal centres are analysed on the whole molecule; the walk, the rings and the ring embedding see it without
    // the bonds of hapto ligands (each such ligand is one domain of its metal and is placed whole afterwards).
    for (const Atom& atom : molecule.atoms)
        if (is_transition_metal(atom.z)) {
            a.metals = analyse_metals(molecule, true, options.metals);
            break;
        }
    a.hapto = !a.metals.hapto_bonds.empty();
    if (a.hapto) a.skeleton = without_hapto_bonds(molecule, a.metals);
    const Molecule& skeleton = a.frame();
    a.domains = analyse_domains(skeleton, true, a.metals.empty() ? nullptr : &a.metals);
    if (a.hapto) a.refine_domains = with_bond_lengths_of(molecule, a.domains);
    check_deadline("analysing the electron domains");
    Structure& s = a.base;
    s.molecule = molecule;
    s.charge = a.domains.charge;
    s.multiplicity = a.domains.multiplicity;
    s.multiplicity_reason = a.domains.multiplicity_reason;
    s.warnings = a.join_notes;
    for (const std::string& w : a.domains.warnings) s.warnings.push_back(w);
    apply_charge_and_multiplicity(molecule, a.domains, options, s);
    for (int i = 0; i < n; ++i)
        s.molecule.atoms[static_cast<size_t>(i)].radical_electrons =
            a.domains.atoms[static_cast<size_t>(i)].single_electrons +
            a.domains.atoms[static_cast<size_t>(i)].p_single_electrons;

    a.chiral = placed_chiral_targets(molecule, skeleton, a.domains, s.warnings);
    // An allene's handedness is set by the assembly's choice of torsion (the refinement has no term across the chain
    // and keeps it); the ring embedding and the refinement get the targets of stereocentres only.
    for (const ChiralTarget& t : a.chiral)
        if (!is_allene_target(molecule, t)) a.centre_targets.push_back(t);
    a.double_bonds = double_bond_targets(molecule);
    a.rings = perceive_rings(skeleton);
    check_deadline("perceiving rings");
}

StructureBuilder::~StructureBuilder() = default;

const Molecule& StructureBuilder::molecule() const { return a_->molecule; }
const MoleculeDomains& StructureBuilder::domains() const { return a_->domains; }
const RingInfo& StructureBuilder::rings() const { return a_->rings; }
bool StructureBuilder::has_hapto_ligands() const { return a_->hapto; }

StructureBuilder::Built StructureBuilder::build(const std::vector<char>& other_mirror, int variant,
                                                double tolerance) const {
    const Analysis& a = *a_;
    const Molecule& skeleton = a.frame();
    Built out;
    Structure& s = out.structure;
    s = a.base;
    std::vector<char> warned_system;
    std::vector<RingSystemCoordinates> ring_xyz;
    ring_xyz.reserve(a.rings.systems.size());
    warned_system.assign(a.rings.systems.size(), 0);
    out.mirrorable.assign(a.rings.systems.size(), 0);
    out.flexible.assign(a.rings.systems.size(), 0);
    for (size_t k = 0; k < a.rings.systems.size(); ++k) {
        check_deadline("embedding ring systems");
        const bool other = k < other_mirror.size() && other_mirror[k];
        // The shape of a system depends on the variant only when it is flexible; its mirror image is its reflection
        // (embed_ring_system's equatorial rule takes one of the two): embedded once per builder (the ensemble asks
        // for each system several times).
        auto known = embedded_.find({k, 0});
        if (variant > 0 && (known == embedded_.end() || known->second.flexible)) known = embedded_.find({k, variant});
        if (known == embedded_.end()) {
            RingSystemEmbedding fresh =
                embed_ring_system(skeleton, a.domains, a.rings, static_cast<int>(k), a.centre_targets, false, variant);
            const int key = variant > 0 && fresh.flexible ? variant : 0;
            known = embedded_.emplace(std::make_pair(k, key), std::move(fresh)).first;
        }
        RingSystemEmbedding e = known->second;
        if (other && e.mirrorable)
            for (Vector3d& p : e.coordinates) p.x() = -p.x();
        out.mirrorable[k] = e.mirrorable;
        out.flexible[k] = static_cast<char>(e.large ? 2 : e.flexible ? 1 : 0);
        note_ring_system(a.rings.systems[k], e, warned_system[k], s.warnings);
        ring_xyz.push_back(std::move(e.coordinates));
    }
    s.positions = assemble_positions(skeleton, a.domains, a.rings, ring_xyz, a.chiral);
    std::vector<std::optional<Vector3d>> site_shift;
    if (a.hapto) place_hapto_ligands(skeleton, a.domains, s.positions, s.warnings, &site_shift);
    check_deadline("assembling the frames");
    pack_components(a.molecule, s.positions);
    check_deadline("packing the components");
    if (a.hapto) out.restraints = hapto_frame_restraints(skeleton, a.domains.metals, s.positions, site_shift);
    out.warned_system = warned_system;
    out.assembly_warnings = s.warnings;
    if (a.options.refine && a.molecule.atom_count() > 1) refine(out, tolerance);
    if (tolerance <= 0) finish(out.structure);
    return out;
}

RefineResult StructureBuilder::refine(Built& built, double tolerance) const {
    const Analysis& a = *a_;
    RefineOptions refine_options;
    refine_options.gradient_tolerance = tolerance > 0 ? tolerance : a.options.refine_tolerance;
    refine_options.bond_outlier = a.options.bond_outlier;
    refine_options.angle_outlier = a.options.angle_outlier;
    refine_options.ring_graph = a.hapto ? &a.skeleton : nullptr;
    refine_options.restraints = built.restraints;
    Structure& s = built.structure;
    RefineResult r;
    if (built.restraints.empty()) {
        // The same terms for every refinement of this molecule: made once (the conformer ensemble refines dozens).
        if (!refiner_)
            refiner_ = std::make_unique<Refiner>(a.molecule, a.refined_domains(), a.centre_targets, a.double_bonds,
                                                 refine_options);
        r = refiner_->run(s.positions, refine_options);
    } else {
        r = refine_structure(a.molecule, a.refined_domains(), a.centre_targets, a.double_bonds, s.positions,
                             refine_options);
    }
    if (!r.converged && r.iterations > 0)
        s.warnings.push_back(fmt::format("refinement not converged after {} iterations{}{}", r.iterations,
                                         r.message.empty() ? "" : ": ", r.message));
    self_check(a.rings, built.warned_system, r.outliers, a.options, s.warnings);
    built.refined_energy = r.energy_after;
    return r;
}

void StructureBuilder::finish(Structure& s) const {
    const Analysis& a = *a_;
    check_deadline("refining");
    for (const ChiralTarget& t : a.chiral)
        if (!chirality_met(t, s.positions))
            s.warnings.push_back(fmt::format("stereocentre at atom {} does not have the written handedness in 3D",
                                             t.centre + 1));
    for (const DoubleBondTarget& t : a.double_bonds)
        if (!double_bond_met(t, s.positions))
            s.warnings.push_back(fmt::format("double bond {}-{} does not have the written configuration in 3D",
                                             t.b + 1, t.c + 1));
    final_checks(a.molecule, s);
}

bool StructureBuilder::stereo_kept(const std::vector<Eigen::Vector3d>& positions) const {
    for (const ChiralTarget& t : a_->chiral)
        if (!chirality_met(t, positions)) return false;
    for (const DoubleBondTarget& t : a_->double_bonds)
        if (!double_bond_met(t, positions)) return false;
    return true;
}

Structure build_structure(const Molecule& written, const BuildOptions& options) {
    const ScopedDeadline deadline(options.time_limit);
    const StructureBuilder builder(written, options);
    return builder.build().structure;
}

}  // namespace repel
