// A uniform cell grid for finding every pair of points closer than a cutoff in time linear in the number of points.
// Cells are cubes at least as large as the cutoff, so a close pair lies in the same or in adjacent cells; only
// occupied cells are stored (hashed by their integer coordinates), so empty space costs nothing and a long stretched
// chain needs no more memory than a compact globule.
#pragma once

#include <cstdint>
#include <span>
#include <utility>
#include <vector>

namespace repel::refine {

class CellGrid {
public:
    // Replaces `pairs` by every pair (i, j), i < j, with |x_i - x_j| < cutoff. x holds x, y, z per point. The order
    // of the pairs depends only on the coordinates (deterministic). Buffers are kept between calls.
    void close_pairs(std::span<const double> x, double cutoff, std::vector<std::pair<int, int>>& pairs);

private:
    struct Cell {
        std::uint64_t key;
        int begin, end;  // range in order_
    };
    int find(std::uint64_t key) const;  // index into cells_, or -1

    std::vector<std::pair<std::uint64_t, int>> order_;  // (cell key, point), sorted
    std::vector<Cell> cells_;
    std::vector<int> table_;  // open-addressing hash: index into cells_, -1 empty
    std::uint64_t mask_ = 0;
};

}  // namespace repel::refine
