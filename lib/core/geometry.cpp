#include "core/geometry.hpp"

#include <Eigen/Geometry>
#include <Eigen/SVD>
#include <cmath>

namespace repel {

using Eigen::Matrix3d;
using Eigen::Vector3d;

Vector3d any_perpendicular(const Vector3d& v) {
    // Cross with the coordinate axis least aligned with v.
    Vector3d axis = std::abs(v.x()) < 0.6 ? Vector3d::UnitX() : (std::abs(v.y()) < 0.6 ? Vector3d::UnitY() : Vector3d::UnitZ());
    return v.cross(axis).normalized();
}

Matrix3d rotation_between(const Vector3d& from, const Vector3d& to) {
    const Vector3d f = from.normalized(), t = to.normalized();
    const double c = f.dot(t);
    if (c < -1 + 1e-12) return Eigen::AngleAxisd(M_PI, any_perpendicular(f)).toRotationMatrix();
    return Eigen::Quaterniond::FromTwoVectors(f, t).toRotationMatrix();
}

Matrix3d kabsch_rotation(std::span<const Vector3d> a, std::span<const Vector3d> b, std::span<const double> weights) {
    if (a.empty()) return Matrix3d::Identity();
    if (a.size() == 1) return rotation_between(a[0], b[0]);
    Matrix3d h = Matrix3d::Zero();
    for (size_t i = 0; i < a.size(); ++i) h += (weights.empty() ? 1.0 : weights[i]) * a[i] * b[i].transpose();
    // Two pairs along one line leave the rotation about that line free: the smallest rotation is the answer then.
    Eigen::JacobiSVD<Matrix3d> svd(h, Eigen::ComputeFullU | Eigen::ComputeFullV);
    const Eigen::Vector3d s = svd.singularValues();
    if (s(1) < 1e-9 * std::max(1.0, s(0))) return rotation_between(a[0], b[0]);
    Matrix3d u = svd.matrixU(), v = svd.matrixV();
    Matrix3d d = Matrix3d::Identity();
    if ((v * u.transpose()).determinant() < 0) d(2, 2) = -1;
    return v * d * u.transpose();
}

double dihedral(const Vector3d& a, const Vector3d& b, const Vector3d& c, const Vector3d& d) {
    const Vector3d b1 = b - a, b2 = c - b, b3 = d - c;
    const Vector3d n1 = b1.cross(b2), n2 = b2.cross(b3);
    const double x = n1.dot(n2);
    const double y = n1.cross(n2).dot(b2.normalized());
    return std::atan2(y, x);
}

double signed_volume(const Vector3d& centre, const Vector3d& a, const Vector3d& b, const Vector3d& c) {
    return (a - centre).dot((b - centre).cross(c - centre));
}

}  // namespace repel
