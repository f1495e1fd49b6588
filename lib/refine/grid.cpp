#include "refine/grid.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace repel::refine {

namespace {

// Cell coordinates are packed into 21 bits each. A structure wider than that many cells (2 million cutoffs) gets
// larger cells instead: still correct, just more pairs to test.
constexpr int kBits = 21;
constexpr std::int64_t kMaxCell = (std::int64_t{1} << kBits) - 2;  // leaves room for the +1 neighbour

std::uint64_t pack(std::int64_t cx, std::int64_t cy, std::int64_t cz) {
    return (static_cast<std::uint64_t>(cx) << (2 * kBits)) | (static_cast<std::uint64_t>(cy) << kBits) |
           static_cast<std::uint64_t>(cz);
}

std::uint64_t hash(std::uint64_t key) {
    // Fibonacci hashing (Knuth, TAOCP vol. 3): multiply by 2^64 / golden ratio and keep the high bits.
    return (key * 0x9E3779B97F4A7C15ull) >> 20;
}

}  // namespace

int CellGrid::find(std::uint64_t key) const {
    for (std::uint64_t slot = hash(key) & mask_;; slot = (slot + 1) & mask_) {
        const int c = table_[slot];
        if (c < 0) return -1;
        if (cells_[static_cast<size_t>(c)].key == key) return c;
    }
}

void CellGrid::close_pairs(std::span<const double> x, double cutoff, std::vector<std::pair<int, int>>& pairs) {
    pairs.clear();
    const int n = static_cast<int>(x.size() / 3);
    if (n < 2 || !(cutoff > 0)) return;

    double lo[3] = {x[0], x[1], x[2]}, hi[3] = {x[0], x[1], x[2]};
    for (int i = 1; i < n; ++i)
        for (int a = 0; a < 3; ++a) {
            lo[a] = std::min(lo[a], x[3 * static_cast<size_t>(i) + static_cast<size_t>(a)]);
            hi[a] = std::max(hi[a], x[3 * static_cast<size_t>(i) + static_cast<size_t>(a)]);
        }
    double cell = cutoff;
    for (int a = 0; a < 3; ++a) cell = std::max(cell, (hi[a] - lo[a]) / static_cast<double>(kMaxCell));

    order_.resize(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) {
        std::int64_t c[3];
        for (int a = 0; a < 3; ++a) {
            const double t = std::floor((x[3 * static_cast<size_t>(i) + static_cast<size_t>(a)] - lo[a]) / cell);
            c[a] = std::isfinite(t)
                       ? std::clamp(static_cast<std::int64_t>(std::clamp(t, 0.0, 1e15)), std::int64_t{0}, kMaxCell)
                       : 0;
        }
        order_[static_cast<size_t>(i)] = {pack(c[0], c[1], c[2]), i};
    }
    std::sort(order_.begin(), order_.end());

    cells_.clear();
    for (int k = 0; k < n;) {
        int e = k + 1;
        while (e < n && order_[static_cast<size_t>(e)].first == order_[static_cast<size_t>(k)].first) ++e;
        cells_.push_back({order_[static_cast<size_t>(k)].first, k, e});
        k = e;
    }
    size_t capacity = 16;
    while (capacity < 2 * cells_.size()) capacity *= 2;
    mask_ = capacity - 1;
    table_.assign(capacity, -1);
    for (size_t c = 0; c < cells_.size(); ++c) {
        std::uint64_t slot = hash(cells_[c].key) & mask_;
        while (table_[slot] >= 0) slot = (slot + 1) & mask_;
        table_[slot] = static_cast<int>(c);
    }

    const double cut2 = cutoff * cutoff;
    const std::uint64_t field = (std::uint64_t{1} << kBits) - 1;
    auto close = [&](int i, int j) {
        const double* p = &x[3 * static_cast<size_t>(i)];
        const double* q = &x[3 * static_cast<size_t>(j)];
        const double dx = p[0] - q[0], dy = p[1] - q[1], dz = p[2] - q[2];
        return dx * dx + dy * dy + dz * dz < cut2;
    };
    for (const Cell& cell_a : cells_) {
        const auto cx = static_cast<std::int64_t>(cell_a.key >> (2 * kBits));
        const auto cy = static_cast<std::int64_t>((cell_a.key >> kBits) & field);
        const auto cz = static_cast<std::int64_t>(cell_a.key & field);
        // Pairs inside the cell.
        for (int u = cell_a.begin; u < cell_a.end; ++u)
            for (int v = u + 1; v < cell_a.end; ++v) {
                const int i = order_[static_cast<size_t>(u)].second, j = order_[static_cast<size_t>(v)].second;
                if (close(i, j)) pairs.emplace_back(std::min(i, j), std::max(i, j));
            }
        // Pairs with the 13 neighbour cells that come later in (x, y, z) order, so each pair is seen once.
        for (int dx = 0; dx <= 1; ++dx)
            for (int dy = (dx == 0 ? 0 : -1); dy <= 1; ++dy)
                for (int dz = (dx == 0 && dy == 0 ? 1 : -1); dz <= 1; ++dz) {
                    const std::int64_t nx = cx + dx, ny = cy + dy, nz = cz + dz;
                    if (ny < 0 || nz < 0) continue;
                    const int other = find(pack(nx, ny, nz));
                    if (other < 0) continue;
                    const Cell& cell_b = cells_[static_cast<size_t>(other)];
                    for (int u = cell_a.begin; u < cell_a.end; ++u)
                        for (int v = cell_b.begin; v < cell_b.end; ++v) {
                            const int i = order_[static_cast<size_t>(u)].second;
                            const int j = order_[static_cast<size_t>(v)].second;
                            if (close(i, j)) pairs.emplace_back(std::min(i, j), std::max(i, j));
                        }
                }
    }
}

}  // namespace repel::refine
