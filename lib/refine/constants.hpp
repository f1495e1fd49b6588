// The constants of the refinement energy, each named and justified once.
//
// Energy unit: the bond term. A bond 0.1 A off its length costs 0.01 (kBond = 1 per A^2); every other force constant
// is set relative to it. The ratios follow the usual proportions of valence force fields (bending about five times
// softer than stretching per radian^2 vs per A^2, torsion barriers a hundred times smaller; from memory), tilted
// towards stiffer angles and planarity because the domain angles and sp2 planes are what the structure must show.
#pragma once

namespace repel::refine {

// ---- Bonds ------------------------------------------------------------------------------------------------------
// E = kBond (d - d0)^2, d0 from bond_length(). The unit of the whole energy.
inline constexpr double kBond = 1.0;

// ---- Angles -----------------------------------------------------------------------------------------------------
// Each predicted angle a-centre-b: E = kAngle (1 - cos(theta - theta0)), about kAngle/2 per rad^2 for every target,
// linear and trans-octahedral ones included: a quarter of the bond constant per A^2 (valence force fields have about
// a fifth, from memory). A purely angular form rather than 1-3 distance restraints: a 1-3 restraint
// turns ring strain into bond stretching (cyclopropane's C-C went 0.2 A long with one at 0.3, since the 1-3 pair of
// a three-membered ring is itself bonded), while an angle term leaves a regular ring's bonds alone.
inline constexpr double kAngle = 0.5;
// Rings the angle targets follow (see targets.cpp), with the values of the ring embedding
// (assemble/ring_embed.cpp) so that refinement keeps what the assembly built: flat rings up to this size take the
// angles of the regular polygon (common practice: 108 degrees in pyrrole, 120 in benzene, 128.6 in azulene's
// seven-ring)...
inline constexpr int kLargestPolygonRing = 8;
// ...a puckered five-membered ring's angles are capped at this (cyclopentane averages about 104-106, from memory)...
inline constexpr double kPuckeredFiveRingAngle = 106.0;
// ...and a planar centre whose three ring angles add up to less than this is curved (fullerenes, bowls) and not held
// planar.
inline constexpr double kCurvedAngleSum = 355.0;
// Torsions through an angle at or above this are undefined (the bond axes are collinear) and are left out.
inline constexpr double kLinearAngleDegrees = 175.0;

// ---- Planarity --------------------------------------------------------------------------------------------------
// An sp2 centre (three bonded domains, no lone pair, no single electron) with neighbours a, b, c: E = kPlanarity v^2,
// v = (a-x).((b-x)x(c-x)) / (ra rb rc), the signed volume in units of the ideal bond lengths (0 when planar, about
// 0.77 for a tetrahedral centre). A polynomial in the coordinates, so its gradient is never singular. About 1.4 per
// A^2 of out-of-plane displacement of an aromatic C: stiffer than the angles, since planarity is what the angles
// (which change only to second order) cannot hold.
inline constexpr double kPlanarity = 0.4;

// ---- Torsions ---------------------------------------------------------------------------------------------------
// All torsion energies are polynomials in cos(phi) (Chebyshev form of cos(n phi)), phi from the normals
// m = b1 x b2 and n = b2 x b3. One torsion quadruple per bond (see targets.cpp), so each constant is the barrier of
// the whole bond.
// Single bond between two centres with four domains: (1 + cos 3 phi) / 2, staggered minima. Ethane's 2.9 kcal/mol
// barrier against a 310 kcal/mol/A^2 C-C stretch (from memory) gives the ratio 0.01; weak enough that ring torsions
// (cyclopentane, macrocycles) follow the angles rather than the other way round.
inline constexpr double kStaggered = 0.01;
// Single bond in a conjugated system (two trigonal centres: dienes, biaryls, amides; or a pi centre and a nitrogen or
// oxygen lone pair: esters, phenols, anilines): 1 - cos^2 phi, minima at 0 and 180. Twice the staggering barrier
// (butadiene's is about 6 kcal/mol, from memory).
inline constexpr double kConjugation = 0.02;
// Double and aromatic bonds: 1 - cos^2 phi. A pi bond's twist barrier is some 60 kcal/mol (from memory), a fifth of a
// C-C stretch constant: keeps alkenes and aromatic rings flat.
inline constexpr double kPiBond = 0.2;
// A DoubleBondTarget's side: (1 - cos phi) / 2 for cis, (1 + cos phi) / 2 for trans, as stiff as the pi term so
// that the written configuration is the deeper of the two planar minima.
inline constexpr double kDoubleBondTarget = 0.2;

// ---- Stereocentres ----------------------------------------------------------------------------------------------
// A ChiralTarget acts only while sign * v < kChiralMargin (v the normalised signed volume above), as
// E = kChiral (kChiralMargin - sign * v)^2. The margin is 40% of a tetrahedral centre's 0.77 (three neighbours of a
// pyramidal centre give 0.7-0.9), so a correct centre never feels it. Ten times the planarity constant, so that it wins
// against the angle terms of a flattened or inverted centre and pushes it through to the right side.
inline constexpr double kChiralMargin = 0.3;
inline constexpr double kChiral = 4.0;

// ---- Contacts ---------------------------------------------------------------------------------------------------
// Atoms neither 1-2 nor 1-3 repel when closer than kContactFraction times the sum of their van der Waals radii:
// E = kContact (d0 - d)^2 below d0. Intramolecular contacts below 80% of the van der Waals sum are rare outside
// hydrogen bonds (common practice), so the term removes clashes without packing the molecule.
inline constexpr double kContactFraction = 0.8;
inline constexpr double kContact = 1.0;
// 1-4 pairs are governed by the torsion terms; they repel only to keep a collapsed torsion from stacking atoms
// (contact distance scaled down: benzene's para C...C at 2.8 A and eclipsed H...H at 2.3 A stay untouched) and at
// half the force.
inline constexpr double kOneFourFraction = 0.65;
inline constexpr double kOneFourScale = 0.5;
// Van der Waals radius for an element without one in the table (common practice: about that of the heavier
// main-group atoms).
inline constexpr double kDefaultVdwRadius = 2.0;
// The contact pair list holds every pair within its contact distance plus this skin, and is rebuilt through the cell
// grid only when some atom has moved more than half the skin since the last build (so the list is always complete:
// the energy is exactly the sum over all pairs). 1 A trades few rebuilds against a short list (common practice).
inline constexpr double kContactSkin = 1.0;
// Up to this many atoms the candidates of the pair list are all pairs, listed once per refinement, instead of the
// cell grid at every rebuild: a drug-sized molecule (50 atoms, 1,225 pairs) rebuilds in a tenth of the instructions
// (callgrind), and 200 atoms keep the list under 20,000 pairs.
inline constexpr int kAllPairsAtoms = 200;

// ---- Numerical guards -------------------------------------------------------------------------------------------
// Below this distance (A) two atoms count as coincident: the direction of a distance gradient is then taken along
// kCoincidentDirection, pushing the pair apart deterministically instead of dividing by zero.
inline constexpr double kCoincident = 1e-9;
// (1, 1, 1) / sqrt(3): any fixed unit vector would do; this one moves all three coordinates.
inline constexpr double kCoincidentDirection[3] = {0.5773502691896258, 0.5773502691896258, 0.5773502691896258};
// Added to the |u|^2 |v|^2 denominators of a cosine (A^2): cos stays smooth and its gradient finite (below about
// 1e4 per A) when a vector vanishes; at ordinary bond lengths the change is below 1e-8 relative.
inline constexpr double kAngleRegularisation = 1e-8;
// Added under the square root of |u x v|^2 for sin(theta) (A^4): keeps its gradient finite at exactly 0 and 180
// degrees; moves no target angle by more than 0.001 degree.
inline constexpr double kSineRegularisation = 1e-6;
// The same for the torsion normals m, n (A^4, |m|^2 is about 4 A^4 for ordinary bonds): the torsion term fades out
// smoothly instead of becoming undefined when a bond angle reaches 0 or 180 degrees.
inline constexpr double kTorsionRegularisation = 1e-4;

// ---- Minimiser --------------------------------------------------------------------------------------------------
// Correction pairs kept by L-BFGS (lbfgs.hpp; Liu and Nocedal 1989 recommend 3 to 20). On the assembled drug set
// (benchmarks/drug_like.smi) more pairs saved evaluations (NLopt's L-BFGS: 8 and 15 pairs 8% and 14% fewer than 4),
// and with plain vector loops a pair costs little next to an energy evaluation.
inline constexpr int kLbfgsMemory = 4;
// Longest move of any coordinate in one trial step, and at most this long the very first step (Angstrom): an
// assembled structure is near its minimum, so a step of several Angstrom is a line search overshooting, which would
// only throw atoms through each other and force a rebuild of the contact list (at half the skin).
inline constexpr double kMaxStep = 1.0;
inline constexpr double kFirstStep = 0.1;

}  // namespace repel::refine
