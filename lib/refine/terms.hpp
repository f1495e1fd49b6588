// The energy terms of the refinement, each with its analytic gradient. Coordinates are a flat array x (x, y, z per
// atom, Angstrom); every function returns its energy and, when g is not null, adds its gradient into g.
#pragma once

#include <array>
#include <span>
#include <vector>

namespace repel::refine {

// E = k (d_ij - target)^2: a bond.
struct DistanceTerm {
    int i = -1, j = -1;
    double target = 0;
    double k = 0;
};

// E = k (1 - cos(theta - theta0)), theta the angle i-centre-j: harmonic (k/2 (theta - theta0)^2) about any target,
// 180 degrees included, bounded for large strain, and written through cos and sin of theta (regularised) so that no
// arccos and no singular gradient appears.
struct AngleTerm {
    int centre = -1, i = -1, j = -1;
    double cos0 = 1, sin0 = 0;  // of the target angle
    double k = 0;
};

// The signed volume v = scale * (a-x).((b-x)x(c-x)), x the centre. As a planarity term: E = k v^2.
struct VolumeTerm {
    int centre = -1, a = -1, b = -1, c = -1;
    double scale = 1;  // 1 / (ra rb rc): volume in units of the bond lengths
    double k = 0;
};

// A kept handedness: E = k (margin - sign v)^2 while sign v < margin, else 0 (v as in VolumeTerm).
struct ChiralTerm {
    int centre = -1, a = -1, b = -1, c = -1;
    double scale = 1;
    int sign = 1;
    double margin = 0;
    double k = 0;
};

// A torsion a-b-c-d: E = c0 + c1 cos(phi) + c2 cos^2(phi) + c3 cos^3(phi) (force constant folded in), with cos(phi)
// regularised so that it stays smooth when a bond angle reaches 0 or 180 degrees.
struct TorsionTerm {
    int a = -1, b = -1, c = -1, d = -1;
    std::array<double, 4> coefficients{};
};

// E = k (distance - d)^2 while d < distance: a soft contact between two atoms.
struct ContactPair {
    int i = -1, j = -1;
    double distance = 0;
    double k = 0;
};

// The polynomials in cos(phi) of the torsion kinds, scaled by k.
std::array<double, 4> staggered_torsion(double k);  // k (1 + cos 3 phi) / 2: minima at 60, 180, 300
std::array<double, 4> planar_torsion(double k);     // k (1 - cos^2 phi): minima at 0 and 180
std::array<double, 4> cis_torsion(double k);        // k (1 - cos phi) / 2
std::array<double, 4> trans_torsion(double k);      // k (1 + cos phi) / 2

double distance_energy(std::span<const DistanceTerm> terms, const double* x, double* g);
double angle_energy(std::span<const AngleTerm> terms, const double* x, double* g);
double planarity_energy(std::span<const VolumeTerm> terms, const double* x, double* g);
double chiral_energy(std::span<const ChiralTerm> terms, const double* x, double* g);
double torsion_energy(std::span<const TorsionTerm> terms, const double* x, double* g);
double contact_energy(std::span<const ContactPair> pairs, const double* x, double* g);

// Every term of a molecule except the contacts (which change with the geometry, see contacts.hpp).
struct EnergyTerms {
    std::vector<DistanceTerm> bonds;
    std::vector<AngleTerm> angles;
    std::vector<VolumeTerm> planes;
    std::vector<TorsionTerm> torsions;      // staggering, conjugation, pi bonds
    std::vector<TorsionTerm> double_bonds;  // DoubleBondTarget sides
    std::vector<ChiralTerm> chiral;
};

// The sum of all the fixed terms.
double bonded_energy(const EnergyTerms& terms, const double* x, double* g);

}  // namespace repel::refine
