// Conjugation, the one place of it: which bonds count as pi bonds, which neighbours take a lone pair (an empty p
// orbital, a polar bridge), and three decisions built on them, one per caller. The three differ on purpose (each was
// set against its own data; merging them would move the built geometries or the audit's verdicts), and the
// differences are the named rules and counts below:
// - delocalised_lone_pair (the domain analysis, domains.cpp): whether a lone pair leaves the sigma domains. Neutral N
//   or O only, all its own bonds single, no three-membered ring, an O between two heavy atoms (or on boron); a
//   neighbour that is an empty-p acceptor, a polar bridge (O only), or of period 2, not an anion, with a pi bond
//   under kPiBondForDelocalisation (aromatic, double or triple) to a third atom.
// - conjugated_donor (the refinement's planarity and torsions, refine/targets.cpp): any N or O without a single
//   electron that has a delocalised pair or a localised one at four domains (also charged atoms, hydroxyl O, N in a
//   three-membered ring), next to an aromatic bond or a pi centre (pi_centre_for_planarity: three domains and a bond
//   under kPiBondForPlanarCentre, aromatic or double, the bond to the donor included; or a neutral three-bonded B).
// - conjugated_nitrogen (the audit's tolerance for a flattened N, check/audit.cpp): an N with one lone pair in the
//   Lewis structure (delocalised or not) and three bonds, next to an atom with a bond under kPiBondKekule (double or
//   triple as written, aromatic flags ignored, the bond to the N included).
// Besides them, amide_like_link (the assembly's torsions and the ensemble's rotatable bonds) and
// crowded_biaryl_bond: where sterics break the conjugation across a biaryl axis (the assembly's start and the
// refinement's torsions).
#pragma once

#include <vector>

#include "graph/molecule.hpp"

namespace repel {

// Which bonds count as pi bonds.
struct PiBondRule {
    bool aromatic = true;  // a bond marked aromatic, whatever its Kekule order
    bool triple = true;    // order 3 and above (order 2 always counts)
};
inline constexpr PiBondRule kPiBondForDelocalisation{true, true};
inline constexpr PiBondRule kPiBondForPlanarCentre{true, false};
inline constexpr PiBondRule kPiBondKekule{false, true};

// Whether `atom` has a pi bond under `rule`, leaving out its bond to `except` (-1: none left out).
bool has_pi_bond(const Molecule& m, int atom, PiBondRule rule, int except = -1);

// A neutral carbene carbon with one single bond to a d-block metal and a neutral N, O or S neighbour (an
// N-heterocyclic carbene): its p orbital is empty, as a three-coordinate boron's.
bool carbene_on_metal(const Molecule& m, int j);

// An atom with an empty p orbital that takes a neighbour's lone pair: a neutral three-coordinate boron with single
// bonds only, or carbene_on_metal.
bool empty_p_acceptor(const Molecule& m, int j);

// A neighbour that draws a bridging oxygen's lone pair towards it: a p-block atom of period 3 or later less
// electronegative than O by at least 0.8 Pauling units (Si, P, S, Al, Ge, As; not Cl, Br, I).
bool is_polar_bridge_neighbour(int z);

// The C-N, C-O or C-S link of an amide, ester, thioamide, amidine, carbamate or urea: a carbon with a double bond
// to N, O or S, single-bonded to the other end (N, O or S). Planar in one of its two forms (common practice): the
// assembly tries only those two, and the conformer ensemble keeps the built one.
bool amide_like_link(const Molecule& m, int a, int b);

// Whether one lone pair of atom i is delocalised into a neighbouring pi system, so that it takes no sigma domain of
// its own (common practice: the lone pair of an amide N, an aniline N, a pyrrole N, an ester or aryl-ether O, the
// O of an enol ether or a nitrite lies in a p orbital parallel to the neighbour's pi bond; amides are planar, and
// the C-O-C of esters opens to 114-118 degrees, G2 methyl formate 114.0, methyl nitrite 114.6). The rule:
// - a neutral N or O (period 2: its lone pair overlaps a second-row pi bond; F stays out, its pairs are held too
//   tightly, common practice) with a lone pair and no single electron;
// - all its own bonds single (an atom with a double bond of its own, pyridine's N, keeps its pair in the sigma
//   plane; aromatic bonds count by their Kekule order, so pyrrole's N and furan's O qualify);
// - bonded to a neutral or cationic period-2 atom (C, N, O, B) that has a double, triple or aromatic bond to a third
//   atom (hypervalent neighbours, the S of a sulfonamide or the P of a phosphate, are left out: their S=O and P=O
//   are not pi bonds the pair can join);
// - not in a three-membered ring (N-acyl aziridines stay pyramidal, common practice);
// - an oxygen only between two heavy atoms: the hydroxyl O of an acid does not open (G2, MP2(full)/6-31G(d):
//   C-O-H 106.0 in formic, 105.4 in acetic acid, against 107.4 in methanol), where counting its pair as delocalised
//   would give 111; the opening at an oxygen comes with two heavy ligands (ester, nitrite, aryl and enol ethers).
// - or bonded to a three-coordinate neutral boron with single bonds only (an empty p orbital: aminoboranes, borazine,
//   boronic esters and acids are planar at N and O, common practice); next to boron a hydroxyl O counts too (the
//   B-O-H of boronic acids opens to about 113 deg, from memory).
// - or bonded to a carbene carbon that donates its lone pair to a metal by a single bond (its p orbital is empty
//   as boron's: the N of an N-heterocyclic carbene is planar and its C-N short, common practice).
// - or an oxygen between two heavy atoms of which one is of period 3 or later and less electronegative than O by at
//   least kPolarBridge (p block: Si, P, S, Al, Ge, As): its pairs are partly given to the neighbours' sigma* orbitals
//   (negative hyperconjugation, Reed and Schleyer, J. Am. Chem. Soc. 112 (1990) 1434; the Si-O bond is largely ionic
//   and the wide Si-O-Si angle follows, Gillespie and Johnson, Inorg. Chem. 36 (1997) 3031, from memory). Measured
//   angles (from memory): Si-O-Si 144 in disiloxane and 148 in hexamethyldisiloxane (gas-phase electron diffraction),
//   P-O-P about 130 and C-O-P about 118 in pyrophosphates and ATP, S-O-S about 124 in pyrosulfate (crystal
//   structures), C-O-C 111 in dimethyl ether; counted as one delocalised pair the centre is AX2E, trigonal.
// At most one pair per atom is delocalised. `lone_pairs` and `single_electrons` are the centre's own counts.
bool delocalised_lone_pair(const Molecule& m, int i, int lone_pairs, int single_electrons);

// The domain counts conjugated_donor reads.
struct DonorCounts {
    int lone_pairs = 0;              // sigma lone pairs
    int delocalised_lone_pairs = 0;  // the pair delocalised_lone_pair took out (0 or 1)
    int single_electrons = 0;
    int steric_number = 0;           // sigma domains
};

// A centre with three domains and a double or aromatic bond: part of a pi system. A neutral three-coordinate
// boron counts too: its empty p orbital takes a neighbour's lone pair (aminoboranes, borazine, boronic esters).
bool pi_centre_for_planarity(const Molecule& m, int i, int steric_number, int bonded);

// A nitrogen or oxygen with a lone pair (four domains) on an aromatic ring or next to a pi centre: amides,
// anilines, pyrrole-type ring nitrogens, esters, phenols, furans. Its lone pair conjugates with the pi system
// (common practice). The domain analysis marks most of them (a delocalised lone pair); the rest (a hydroxyl O, an N
// in a three-membered ring) keep four domains and are found here. `pi_centre`: pi_centre_for_planarity per atom.
bool conjugated_donor(const Molecule& m, int i, const DonorCounts& counts, const std::vector<bool>& pi_centre);

// A nitrogen with one lone pair next to a multiple bond (amide, aniline, pyrrole, enamine): conjugation may flatten
// it, so a planar centre is accepted as well as the pyramid the domain count predicts (common practice).
// `lewis_lone_pairs`: sigma and delocalised lone pairs together.
bool conjugated_nitrogen(const Molecule& m, int centre, int lewis_lone_pairs, int bonded);

// A single bond between two aromatic rings (a biaryl axis, not in a ring) with a heavy atom at an ortho position of
// either ring: a substituent, or the fused ring at a naphthyl's peri side. Such rings cannot be coplanar (the ortho
// group meets the other ring's ortho hydrogen), so the conjugation that would flatten them yields: the assembly
// starts them turned (kCrowdedBiarylTorsion) and the refinement has no planar torsion across them. Gas-phase
// 2,2'-dimethylbiphenyl and 2-methylbiphenyl are twisted by about 60-90 degrees, biphenyl by 44 (from memory); a
// planar start is a saddle a quantum-chemistry optimisation keeps by symmetry.
bool crowded_biaryl_bond(const Molecule& m, int bond);
// Degrees: the torsion a crowded biaryl axis starts at (common practice: between the 44 degrees of biphenyl and the
// perpendicular of the most crowded).
inline constexpr double kCrowdedBiarylTorsion = 65;

// A single bond from an aromatic ring to a trigonal atom outside rings that carries another aromatic ring: a blade of
// a propeller (benzophenone, the trityl cation, triphenylborane, triphenylamine). Coplanar blades put their ortho
// hydrogens onto each other; the rings turn the same way by about 30 degrees (trityl cation about 32, benzophenone
// about 30, triphenylborane about 30; from memory). Treated as a crowded biaryl axis, at kPropellerTorsion.
bool propeller_blade_bond(const Molecule& m, int bond);
inline constexpr double kPropellerTorsion = 30;

}  // namespace repel
