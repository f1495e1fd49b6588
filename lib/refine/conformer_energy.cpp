#include "refine/conformer_energy.hpp"

#include <Eigen/Geometry>

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

#include "core/element.hpp"
#include "core/geometry.hpp"
#include "core/neighbor_grid.hpp"

namespace repel {

using Eigen::Vector3d;

namespace {

size_t at(int i) { return static_cast<size_t>(i); }

// Molecules up to this many atoms list every pair once; larger ones look pairs up in a cell grid within kCutoff.
constexpr int kAllPairs = 400;
// Angstrom: past it the screened Coulomb term (1/r^2) and the dispersion (1/r^6) are below 0.01 kcal/mol per pair
// (common practice for ranking).
constexpr double kCutoff = 10.0;
// Coulomb's constant in kcal A / (mol e^2) (CODATA, from memory) and the distance-dependent dielectric eps = 4 r
// (common practice for gas-phase ranking without solvent).
constexpr double kCoulomb = 332.0637;
constexpr double kDielectricSlope = 4.0;
// Non-bonded pairs three bonds apart count half (common practice in force fields; DREIDING itself counts them in
// full, from memory): with the wall cut below (and in full) gauche n-butane came 0.55 (1.7) kcal/mol above anti,
// against about 0.6-0.9 measured (from memory).
constexpr double kOneFourScale = 0.5;
// (R0/r)^2 at which the van der Waals wall is cut flat: pairs closer than 0.8 R0 count as at 0.8 R0. The refinement
// lets contacts come to 0.8 of the van der Waals sum (refine/constants.hpp), short of DREIDING's minima, whose wall
// would otherwise rank conformers by how close the refinement left two hydrogens (gauche n-butane 9 kcal/mol above
// anti, measured); minimising in this energy instead costs 40 times a build (measured). Cut at 0.85 or 0.75 R0 the
// ranking of n-butane, methylcyclohexane and cyclohexanol went wrong or far off (measured).
constexpr double kWallCap = 1 / (0.8 * 0.8);

// DREIDING van der Waals parameters (Mayo, Olafson, Goddard 1990, table of R0 and D0; from memory): minimum
// distance R0 (A) and well depth D0 (kcal/mol) per element. Elements without an entry: R0 twice the van der Waals
// radius of core/element.cpp and D0 0.1 (common practice).
struct VdwParameters {
    int z;
    double r0, d0;
};
constexpr std::array<VdwParameters, 12> kVdw{{{1, 3.195, 0.0152}, {5, 4.02, 0.095}, {6, 3.8983, 0.0951},
                                              {7, 3.6621, 0.0774}, {8, 3.4046, 0.0957}, {9, 3.4720, 0.0725},
                                              {14, 4.27, 0.31}, {15, 4.15, 0.32}, {16, 4.03, 0.344},
                                              {17, 3.9503, 0.2833}, {35, 3.95, 0.37}, {53, 4.15, 0.51}}};

// Gasteiger-Marsili parameters a, b, c of the orbital electronegativity chi = a + b q + c q^2 (Gasteiger and
// Marsili, Tetrahedron 36 (1980) 3219, table 1; from memory), by element and hybridisation (steric number 4, 3, 2).
struct PeoeParameters {
    int z, steric;
    double a, b, c;
};
constexpr std::array<PeoeParameters, 16> kPeoe{{{1, 0, 7.17, 6.24, -0.56},   {6, 4, 7.98, 9.18, 1.88},
                                               {6, 3, 8.79, 9.32, 1.51},    {6, 2, 10.39, 9.45, 0.73},
                                               {7, 4, 11.54, 10.82, 1.36},  {7, 3, 12.87, 11.15, 0.85},
                                               {7, 2, 15.68, 11.70, -0.27}, {8, 4, 14.18, 12.92, 1.39},
                                               {8, 3, 17.07, 13.79, 0.47},  {9, 0, 14.66, 13.85, 2.31},
                                               {17, 0, 11.00, 9.69, 1.35},  {35, 0, 10.08, 8.47, 1.16},
                                               {53, 0, 9.90, 7.96, 0.96},   {16, 0, 10.14, 9.13, 1.38},
                                               {15, 0, 8.90, 8.24, 0.96},   {5, 0, 7.98, 9.18, 1.88}}};
// The hydrogen cation's electronegativity, used instead of a + b + c for hydrogen (Gasteiger and Marsili 1980).
constexpr double kHydrogenCation = 20.02;
constexpr int kPeoeIterations = 6;  // each damped by a further half (Gasteiger and Marsili 1980)

const PeoeParameters* peoe(int z, int steric) {
    for (const PeoeParameters& p : kPeoe)
        if (p.z == z && (p.steric == 0 || p.steric == steric)) return &p;
    if (z == 6 || z == 7 || z == 8)  // an unusual steric number: the sp3 entry
        for (const PeoeParameters& p : kPeoe)
            if (p.z == z && p.steric == 4) return &p;
    return nullptr;
}

std::vector<double> gasteiger_charges(const Molecule& m, const MoleculeDomains& d) {
    const int n = m.atom_count();
    std::vector<double> q(at(n));
    std::vector<const PeoeParameters*> p(at(n));
    for (int i = 0; i < n; ++i) {
        q[at(i)] = m.atoms[at(i)].charge;
        p[at(i)] = peoe(m.atoms[at(i)].z, d.atoms[at(i)].steric_number);
    }
    double damping = 1;
    for (int k = 0; k < kPeoeIterations; ++k) {
        damping *= 0.5;
        std::vector<double> chi(at(n), 0);
        for (int i = 0; i < n; ++i)
            if (p[at(i)]) chi[at(i)] = p[at(i)]->a + p[at(i)]->b * q[at(i)] + p[at(i)]->c * q[at(i)] * q[at(i)];
        std::vector<double> dq(at(n), 0);
        for (const Bond& b : m.bonds) {
            if (!p[at(b.a)] || !p[at(b.b)]) continue;
            // Electrons go to the more electronegative end; the other end's cation electronegativity scales it.
            const int lo = chi[at(b.a)] < chi[at(b.b)] ? b.a : b.b, hi = lo == b.a ? b.b : b.a;
            const PeoeParameters& pl = *p[at(lo)];
            const double cation = pl.z == 1 ? kHydrogenCation : pl.a + pl.b + pl.c;
            const double t = damping * (chi[at(hi)] - chi[at(lo)]) / cation;
            dq[at(lo)] += t;
            dq[at(hi)] -= t;
        }
        for (int i = 0; i < n; ++i) q[at(i)] += dq[at(i)];
    }
    return q;
}

bool group16(int z) { return z == 8 || z == 16 || z == 34 || z == 52; }

}  // namespace

ConformerEnergy::Pair ConformerEnergy::pair(int i, int j, int apart) const {
    Pair p{i, j, std::sqrt(r0_[at(i)] * r0_[at(j)]), std::sqrt(d0_[at(i)] * d0_[at(j)]),
           kCoulomb * charges_[at(i)] * charges_[at(j)], apart == 3 ? kOneFourScale : 1.0};
    return p;
}

ConformerEnergy::ConformerEnergy(const Molecule& m, const MoleculeDomains& d)
    : neighbourhood_(m), atoms_(m.atom_count()) {
    const int n = atoms_;
    charges_ = gasteiger_charges(m, d);
    r0_.resize(at(n));
    d0_.resize(at(n));
    for (int i = 0; i < n; ++i) {
        const int z = m.atoms[at(i)].z;
        r0_[at(i)] = 2 * element(z).r_vdw;
        d0_[at(i)] = 0.1;
        for (const VdwParameters& v : kVdw)
            if (v.z == z) {
                r0_[at(i)] = v.r0;
                d0_[at(i)] = v.d0;
            }
    }
    // DREIDING torsions about single bonds (E = V/2 [1 - cos(n (phi - phi0))], V shared by the torsions about the
    // bond): two tetrahedral centres V 2.0, n 3, staggered; a tetrahedral and a trigonal centre V 1.0, n 6; two
    // trigonal centres V 5.0, n 2, planar; an sp3 O or S next to a trigonal centre V 2.0, n 2, planar (anisole,
    // esters). Double, triple and aromatic bonds have none (their configuration is kept, the same in every
    // conformer), nor bonds at linear centres or metals.
    for (const Bond& bond : m.bonds) {
        if (bond.order != 1 || bond.aromatic) continue;
        const int b = bond.a, c = bond.b;
        const CentreDomains& cb = d.atoms[at(b)];
        const CentreDomains& cc = d.atoms[at(c)];
        if (is_transition_metal(m.atoms[at(b)].z) || is_transition_metal(m.atoms[at(c)].z)) continue;
        const auto& nb = m.neighbors(b);
        const auto& nc = m.neighbors(c);
        if (nb.size() < 2 || nc.size() < 2 || cb.steric_number < 3 || cc.steric_number < 3) continue;
        const bool tb = cb.steric_number == 4, tc = cc.steric_number == 4;
        double v = 0;
        int periodicity = 0;
        double cos_phase = 1;
        if (tb && tc) {
            v = 2.0, periodicity = 3, cos_phase = -1;
        } else if (tb != tc) {
            const int sp3 = tb ? b : c;
            if (group16(m.atoms[at(sp3)].z)) v = 2.0, periodicity = 2, cos_phase = 1;
            else v = 1.0, periodicity = 6, cos_phase = 1;
        } else {
            v = 5.0, periodicity = 2, cos_phase = 1;
        }
        const double shared = static_cast<double>((nb.size() - 1) * (nc.size() - 1));
        for (const Neighbor& a : nb)
            for (const Neighbor& e : nc)
                if (a.atom != c && e.atom != b && a.atom != e.atom)
                    torsions_.push_back({a.atom, b, c, e.atom, v / shared, periodicity, cos_phase});
    }
    if (n <= kAllPairs)
        for (int i = 0; i < n; ++i)
            for (int j = i + 1; j < n; ++j) {
                const int apart = neighbourhood_.bonds_apart(i, j);
                if (apart == 1 || apart == 2) continue;
                // Hydrogens are left out of the van der Waals sum (a united-atom view, common practice): the
                // refinement lets their contacts come to 0.8 of the van der Waals sum, where DREIDING's wall for
                // them would dominate the ranking (gauche n-butane 9 kcal/mol above anti, measured); minimising in
                // this energy instead costs 40 times a build (measured). Their charges stay in the electrostatics.
                pairs_.push_back(pair(i, j, apart));
                const Pair& p = pairs_.back();
                fast_.push_back({i, j, p.r0 * p.r0, p.scale * p.d0, p.scale * p.qq / kDielectricSlope});
            }
}

namespace {

Vector3d point(const double* x, int i) { return {x[3 * at(i)], x[3 * at(i) + 1], x[3 * at(i) + 2]}; }

void add_to(double* g, int i, const Vector3d& v) {
    for (int k = 0; k < 3; ++k) g[3 * at(i) + static_cast<size_t>(k)] += v[k];
}

}  // namespace

double ConformerEnergy::energy(const double* x, double* g, double scale) const {
    return evaluate(x, g, scale, nullptr);
}

double ConformerEnergy::evaluate(const double* x, double* g, double scale, ConformerEnergyParts* parts) const {
    ConformerEnergyParts e;
    for (const Torsion& t : torsions_) {
        // phi of a-b-c-d and its gradient (Blondel and Karplus, J. Comput. Chem. 17 (1996) 1132).
        const Vector3d f = point(x, t.a) - point(x, t.b), h = point(x, t.c) - point(x, t.b),
                       k = point(x, t.d) - point(x, t.c);
        const Vector3d gb = h;  // the central bond b -> c
        const Vector3d m = f.cross(gb), n = k.cross(gb);
        const double m2 = m.squaredNorm(), n2 = n.squaredNorm(), glen = gb.norm();
        if (!(m2 > 1e-12) || !(n2 > 1e-12) || !(glen > 1e-9)) continue;  // a linear angle: no torsion
        // cos(n phi) and sin(n phi) as the n-th power of cos phi + i sin phi: no atan2, no sine or cosine calls.
        const double mn = std::sqrt(m2 * n2);
        const double c1 = m.dot(n) / mn, s1 = m.cross(n).dot(gb) / (glen * mn);
        double cn = 1, sn = 0;
        for (int power = 0; power < t.periodicity; ++power) {
            const double c = cn * c1 - sn * s1;
            sn = sn * c1 + cn * s1;
            cn = c;
        }
        e.torsion += 0.5 * t.barrier * (1 - t.cos_phase * cn);
        if (!g) continue;
        const double dedphi = scale * 0.5 * t.barrier * t.cos_phase * t.periodicity * sn;
        const Vector3d da = glen / m2 * m;
        const Vector3d dd = -glen / n2 * n;
        const double fg = f.dot(gb) / (glen * glen), kg = k.dot(gb) / (glen * glen);
        const Vector3d db = -da + fg * da + kg * dd;
        const Vector3d dc = -dd - fg * da - kg * dd;
        add_to(g, t.a, dedphi * da);
        add_to(g, t.b, dedphi * db);
        add_to(g, t.c, dedphi * dc);
        add_to(g, t.d, dedphi * dd);
    }
    auto add = [&](const Pair& p) {
        const Vector3d r = point(x, p.i) - point(x, p.j);
        const double r2 = r.squaredNorm();
        if (!(r2 > 1e-6)) return;
        // DREIDING's Lennard-Jones 12-6: D0 [(R0/r)^12 - 2 (R0/r)^6]; Coulomb with eps = 4 r.
        const double raw = p.r0 * p.r0 / r2;
        const bool capped = raw > kWallCap;
        const double s2 = capped ? kWallCap : raw;
        const double s6 = s2 * s2 * s2;
        const double vdw = p.scale * p.d0 * (s6 * s6 - 2 * s6);
        const double elec = p.scale * p.qq / (kDielectricSlope * r2);
        e.van_der_waals += vdw;
        e.electrostatic += elec;
        if (!g) return;
        // dE/dr / r, for the gradient along r: LJ -12 D0 (s12 - s6) / r^2, Coulomb -2 E / r^2.
        const double d = scale * ((capped ? 0.0 : -12 * p.scale * p.d0 * (s6 * s6 - s6)) - 2 * elec) / r2;
        add_to(g, p.i, d * r);
        add_to(g, p.j, -d * r);
    };
    if (!pairs_.empty() || atoms_ <= kAllPairs) {
        // The same as add() over the pair list, with the constants of each pair folded once and one division.
        double vdw = 0, elec = 0;
        for (const Fast& p : fast_) {
            const double* a = x + 3 * at(p.i);
            const double* b = x + 3 * at(p.j);
            const double dx = a[0] - b[0], dy = a[1] - b[1], dz = a[2] - b[2];
            const double r2 = dx * dx + dy * dy + dz * dz;
            if (!(r2 > 1e-6)) continue;
            const double inv = 1 / r2;
            const double raw = p.r0_squared * inv;
            const bool capped = raw > kWallCap;
            const double s2 = capped ? kWallCap : raw;
            const double s6 = s2 * s2 * s2;
            const double ee = p.coulomb * inv;
            vdw += p.depth * (s6 * s6 - 2 * s6);
            elec += ee;
            if (!g) continue;
            const double d = scale * ((capped ? 0.0 : -12 * p.depth * (s6 * s6 - s6)) - 2 * ee) * inv;
            double* ga = g + 3 * at(p.i);
            double* gb2 = g + 3 * at(p.j);
            ga[0] += d * dx, ga[1] += d * dy, ga[2] += d * dz;
            gb2[0] -= d * dx, gb2[1] -= d * dy, gb2[2] -= d * dz;
        }
        e.van_der_waals += vdw;
        e.electrostatic += elec;
    } else {
        NeighborGrid grid(kCutoff);
        for (int i = 0; i < atoms_; ++i) grid.insert(i, point(x, i));
        for (int i = 0; i < atoms_; ++i)
            grid.for_each_near(point(x, i), [&](int j) {
                if (j <= i || (point(x, i) - point(x, j)).squaredNorm() > kCutoff * kCutoff) return;
                const int apart = neighbourhood_.bonds_apart(i, j);
                if (apart == 1 || apart == 2) return;
                add(pair(i, j, apart));
            });
    }
    e.total = e.torsion + e.van_der_waals + e.electrostatic;
    if (parts) *parts = e;
    return scale * e.total;
}

ConformerEnergyParts ConformerEnergy::energy(const std::vector<Vector3d>& positions) const {
    std::vector<double> x(3 * positions.size());
    for (size_t i = 0; i < positions.size(); ++i)
        for (int k = 0; k < 3; ++k) x[3 * i + static_cast<size_t>(k)] = positions[i][k];
    ConformerEnergyParts e;
    evaluate(x.data(), nullptr, 1.0, &e);
    return e;
}

}  // namespace repel
