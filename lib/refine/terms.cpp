#include "refine/terms.hpp"

#include <Eigen/Core>
#include <Eigen/Geometry>
#include <cmath>

#include "refine/constants.hpp"

namespace repel::refine {

namespace {

using Vec = Eigen::Vector3d;

Vec at(const double* x, int i) {
    const double* p = x + 3 * static_cast<std::ptrdiff_t>(i);
    return {p[0], p[1], p[2]};
}

void add(double* g, int i, const Vec& v) {
    double* p = g + 3 * static_cast<std::ptrdiff_t>(i);
    p[0] += v.x();
    p[1] += v.y();
    p[2] += v.z();
}

// Adds dE/dr times the gradient of the distance r = |x_j - x_i| (d = x_j - x_i). For coincident atoms the
// direction is kCoincidentDirection, so that a pair on top of each other is pushed apart (i one way, j the other)
// instead of producing 0/0.
inline void add_pair(double* g, int i, int j, double de_dr, double dx, double dy, double dz, double r) {
    double ux, uy, uz;
    if (r > kCoincident) {
        const double inv = de_dr / r;
        ux = dx * inv;
        uy = dy * inv;
        uz = dz * inv;
    } else {
        ux = de_dr * kCoincidentDirection[0];
        uy = de_dr * kCoincidentDirection[1];
        uz = de_dr * kCoincidentDirection[2];
    }
    double* p = g + 3 * static_cast<std::ptrdiff_t>(i);
    double* q = g + 3 * static_cast<std::ptrdiff_t>(j);
    p[0] -= ux;
    p[1] -= uy;
    p[2] -= uz;
    q[0] += ux;
    q[1] += uy;
    q[2] += uz;
}

// cos of the angle between u and v, regularised: u.v / sqrt((u.u + eps)(v.v + eps)), with its derivatives.
struct Cosine {
    double value;
    Vec du, dv;
};

inline Cosine regularised_cosine(const Vec& u, const Vec& v, double eps) {
    const double a = u.squaredNorm() + eps;
    const double b = v.squaredNorm() + eps;
    const double s = std::sqrt(a * b);
    const double c = u.dot(v) / s;
    return {c, v / s - (c / a) * u, u / s - (c / b) * v};
}

// Signed volume a.(b x c) of the three arms from a centre, with its derivatives by each arm.
struct Volume {
    double value;
    Vec da, db, dc;
};

inline Volume volume(const Vec& a, const Vec& b, const Vec& c) {
    const Vec bc = b.cross(c);
    return {a.dot(bc), bc, c.cross(a), a.cross(b)};
}

}  // namespace

std::array<double, 4> staggered_torsion(double k) {
    // cos 3 phi = 4 c^3 - 3 c
    return {0.5 * k, -1.5 * k, 0.0, 2.0 * k};
}
std::array<double, 4> planar_torsion(double k) { return {k, 0.0, -k, 0.0}; }
std::array<double, 4> cis_torsion(double k) { return {0.5 * k, -0.5 * k, 0.0, 0.0}; }
std::array<double, 4> trans_torsion(double k) { return {0.5 * k, 0.5 * k, 0.0, 0.0}; }

double distance_energy(std::span<const DistanceTerm> terms, const double* x, double* g) {
    double e = 0;
    for (const DistanceTerm& t : terms) {
        const double* p = x + 3 * static_cast<std::ptrdiff_t>(t.i);
        const double* q = x + 3 * static_cast<std::ptrdiff_t>(t.j);
        const double dx = q[0] - p[0], dy = q[1] - p[1], dz = q[2] - p[2];
        const double r = std::sqrt(dx * dx + dy * dy + dz * dz);
        const double dev = r - t.target;
        e += t.k * dev * dev;
        if (g) add_pair(g, t.i, t.j, 2.0 * t.k * dev, dx, dy, dz, r);
    }
    return e;
}

double angle_energy(std::span<const AngleTerm> terms, const double* x, double* g) {
    double e = 0;
    for (const AngleTerm& t : terms) {
        const Vec o = at(x, t.centre);
        const Vec u = at(x, t.i) - o, v = at(x, t.j) - o;
        const double a = u.squaredNorm() + kAngleRegularisation;
        const double b = v.squaredNorm() + kAngleRegularisation;
        const double uv = u.dot(v);
        const double inv_ab = 1.0 / std::sqrt(a * b);
        const double sw = std::sqrt(u.cross(v).squaredNorm() + kSineRegularisation);  // |u x v|, regularised
        const double c = uv * inv_ab;  // cos theta
        const double s = sw * inv_ab;  // sin theta
        e += t.k * (1.0 - t.cos0 * c - t.sin0 * s);
        if (g) {
            // dc/du = v/sqrt(ab) - c u/a, ds/du = (v x w)/(sw sqrt(ab)) - s u/a with w = u x v, and the same for v;
            // then dE = -k (cos0 dc + sin0 ds). v x w = (v.v) u - (u.v) v and w x u = (u.u) v - (u.v) u, so both
            // gradients are combinations of u and v (no cross product), and 1/a = b/(ab), 1/b = a/(ab).
            const double kc = -t.k * t.cos0, ks = -t.k * t.sin0;
            const double f = ks * inv_ab / sw;
            const double inv_ab2 = inv_ab * inv_ab;
            const double radial = -(kc * c + ks * s) * inv_ab2;  // times b for u, times a for v
            const double cross_term = kc * inv_ab - f * uv;
            const double uu = a - kAngleRegularisation, vv = b - kAngleRegularisation;
            const Vec gu = (f * vv + radial * b) * u + cross_term * v;
            const Vec gv = cross_term * u + (f * uu + radial * a) * v;
            add(g, t.i, gu);
            add(g, t.j, gv);
            add(g, t.centre, -(gu + gv));
        }
    }
    return e;
}

double planarity_energy(std::span<const VolumeTerm> terms, const double* x, double* g) {
    double e = 0;
    for (const VolumeTerm& t : terms) {
        const Vec o = at(x, t.centre);
        const Volume v = volume(at(x, t.a) - o, at(x, t.b) - o, at(x, t.c) - o);
        const double s = t.scale * v.value;
        e += t.k * s * s;
        if (g) {
            const double f = 2.0 * t.k * s * t.scale;
            add(g, t.a, f * v.da);
            add(g, t.b, f * v.db);
            add(g, t.c, f * v.dc);
            add(g, t.centre, -f * (v.da + v.db + v.dc));
        }
    }
    return e;
}

double chiral_energy(std::span<const ChiralTerm> terms, const double* x, double* g) {
    double e = 0;
    for (const ChiralTerm& t : terms) {
        const Vec o = at(x, t.centre);
        const Volume v = volume(at(x, t.a) - o, at(x, t.b) - o, at(x, t.c) - o);
        const double s = t.sign * t.scale * v.value;
        if (s >= t.margin) continue;
        const double short_by = t.margin - s;
        e += t.k * short_by * short_by;
        if (g) {
            const double f = -2.0 * t.k * short_by * t.sign * t.scale;
            add(g, t.a, f * v.da);
            add(g, t.b, f * v.db);
            add(g, t.c, f * v.dc);
            add(g, t.centre, -f * (v.da + v.db + v.dc));
        }
    }
    return e;
}

double torsion_energy(std::span<const TorsionTerm> terms, const double* x, double* g) {
    double e = 0;
    for (const TorsionTerm& t : terms) {
        const Vec pa = at(x, t.a), pb = at(x, t.b), pc = at(x, t.c), pd = at(x, t.d);
        const Vec b1 = pb - pa, b2 = pc - pb, b3 = pd - pc;
        const Vec m = b1.cross(b2), n = b2.cross(b3);
        const Cosine c = regularised_cosine(m, n, kTorsionRegularisation);
        const auto& k = t.coefficients;
        const double cv = c.value;
        e += k[0] + cv * (k[1] + cv * (k[2] + cv * k[3]));
        if (g) {
            const double de = k[1] + cv * (2.0 * k[2] + 3.0 * cv * k[3]);
            const Vec gm = de * c.du, gn = de * c.dv;
            // m = b1 x b2, n = b2 x b3: d(u x v).w = du.(v x w) + dv.(w x u)
            const Vec g1 = b2.cross(gm);
            const Vec g2 = gm.cross(b1) + b3.cross(gn);
            const Vec g3 = gn.cross(b2);
            add(g, t.a, -g1);
            add(g, t.b, g1 - g2);
            add(g, t.c, g2 - g3);
            add(g, t.d, g3);
        }
    }
    return e;
}

double contact_energy(std::span<const ContactPair> pairs, const double* x, double* g) {
    double e = 0;
    for (const ContactPair& c : pairs) {
        const double* p = x + 3 * static_cast<std::ptrdiff_t>(c.i);
        const double* q = x + 3 * static_cast<std::ptrdiff_t>(c.j);
        const double dx = q[0] - p[0], dy = q[1] - p[1], dz = q[2] - p[2];
        const double r2 = dx * dx + dy * dy + dz * dz;
        if (r2 >= c.distance * c.distance) continue;
        const double r = std::sqrt(r2);
        const double short_by = c.distance - r;
        e += c.k * short_by * short_by;
        if (g) add_pair(g, c.i, c.j, -2.0 * c.k * short_by, dx, dy, dz, r);
    }
    return e;
}

double bonded_energy(const EnergyTerms& terms, const double* x, double* g) {
    return distance_energy(terms.bonds, x, g) + angle_energy(terms.angles, x, g) +
           planarity_energy(terms.planes, x, g) + torsion_energy(terms.torsions, x, g) +
           torsion_energy(terms.double_bonds, x, g) + chiral_energy(terms.chiral, x, g);
}

}  // namespace repel::refine
