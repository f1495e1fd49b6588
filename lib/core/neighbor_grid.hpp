// A spatial hash of atom positions for neighbour queries in linear time (cubic cells, 27-cell look-ups).
#pragma once

#include <Eigen/Core>
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <unordered_map>
#include <vector>

namespace repel {

class NeighborGrid {
public:
    explicit NeighborGrid(double cell) : cell_(cell) {}

    void insert(int atom, const Eigen::Vector3d& p) { cells_[key(cell_of(p.x()), cell_of(p.y()), cell_of(p.z()))].push_back(atom); }

    // Calls f(atom) for every inserted atom in the 27 cells around p (a superset of those within one cell length).
    template <class F>
    void for_each_near(const Eigen::Vector3d& p, F&& f) const {
        const std::int64_t cx = cell_of(p.x()), cy = cell_of(p.y()), cz = cell_of(p.z());
        for (std::int64_t dx = -1; dx <= 1; ++dx)
            for (std::int64_t dy = -1; dy <= 1; ++dy)
                for (std::int64_t dz = -1; dz <= 1; ++dz) {
                    auto it = cells_.find(key(cx + dx, cy + dy, cz + dz));
                    if (it == cells_.end()) continue;
                    for (int a : it->second) f(a);
                }
    }

    double cell() const { return cell_; }

private:
    // Clamped before the conversion: a coordinate of 1e300 (a file may state one) would otherwise overflow the
    // integer (undefined behaviour); far-off atoms share the outermost cells, which only costs time, never a pair.
    std::int64_t cell_of(double x) const {
        const double t = std::floor(x / cell_);
        return std::isfinite(t) ? static_cast<std::int64_t>(std::clamp(t, -1e15, 1e15)) : 0;
    }
    static std::int64_t key(std::int64_t x, std::int64_t y, std::int64_t z) {
        return ((x & 0x1FFFFF) << 42) | ((y & 0x1FFFFF) << 21) | (z & 0x1FFFFF);
    }
    double cell_;
    std::unordered_map<std::int64_t, std::vector<int>> cells_;
};

}  // namespace repel
