// Continuous shape measures: one centre against every ideal polyhedron of its coordination number (shape_measures),
// for 6, 8 and 9 ligands, near an ideal (a polyhedron with 0.05 A of noise: what a checked structure gives) and far
// from all (random directions: the bounds of the exact search prune least), the all-tied worst case, and single
// measures for 9.
#include <benchmark/benchmark.h>

#include <Eigen/Core>
#include <random>
#include <string_view>
#include <vector>

#include "check/shape_measure.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

std::vector<Vector3d> near_ideal(int cn, std::string_view symbol) {
    std::mt19937 rng(1);
    std::normal_distribution<double> noise(0.0, 0.05);
    std::vector<Vector3d> out;
    for (const auto& r : reference_polyhedra(cn))
        if (r.symbol == symbol)
            for (const auto& p : r.points) out.push_back(2.0 * p + Vector3d(noise(rng), noise(rng), noise(rng)));
    return out;
}

std::vector<Vector3d> random_directions(int cn) {
    std::mt19937 rng(2);
    std::normal_distribution<double> normal(0.0, 1.0);
    std::vector<Vector3d> out;
    for (int i = 0; i < cn; ++i) out.push_back(2.0 * Vector3d(normal(rng), normal(rng), normal(rng)).normalized());
    return out;
}

void run_all(benchmark::State& state, const std::vector<Vector3d>& ligands) {
    for (auto _ : state) benchmark::DoNotOptimize(shape_measures(ligands, Vector3d::Zero()));
    state.counters["references"] = static_cast<double>(reference_polyhedra(static_cast<int>(ligands.size())).size());
}

void BM_AllShapes_CN6_NearOctahedron(benchmark::State& s) { run_all(s, near_ideal(6, "OC-6")); }
void BM_AllShapes_CN8_NearAntiprism(benchmark::State& s) { run_all(s, near_ideal(8, "SAPR-8")); }
void BM_AllShapes_CN9_NearTricappedPrism(benchmark::State& s) { run_all(s, near_ideal(9, "TCTPR-9")); }
void BM_AllShapes_CN6_Random(benchmark::State& s) { run_all(s, random_directions(6)); }
void BM_AllShapes_CN8_Random(benchmark::State& s) { run_all(s, random_directions(8)); }
void BM_AllShapes_CN9_Random(benchmark::State& s) { run_all(s, random_directions(9)); }
// Worst case of the exact search: every ligand on one point, so every assignment ties and no branch can be cut by
// the bound (only by the ideal's symmetry).
void BM_AllShapes_CN9_AllTied(benchmark::State& s) { run_all(s, std::vector<Vector3d>(9, Vector3d(2, 0, 0))); }

// One reference at a time for 9 ligands (argument: its index in the table).
void BM_One_CN9_NearTricappedPrism(benchmark::State& state) {
    const auto ligands = near_ideal(9, "TCTPR-9");
    const auto& ideal = reference_polyhedra(9)[static_cast<size_t>(state.range(0))];
    for (auto _ : state) benchmark::DoNotOptimize(continuous_shape_measure(ligands, Vector3d::Zero(), ideal));
    state.SetLabel(std::string(ideal.symbol));
}

}  // namespace

BENCHMARK(BM_AllShapes_CN6_NearOctahedron)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN8_NearAntiprism)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN9_NearTricappedPrism)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN6_Random)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN8_Random)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN9_Random)->Unit(benchmark::kMicrosecond);
BENCHMARK(BM_AllShapes_CN9_AllTied)->Unit(benchmark::kMillisecond);
BENCHMARK(BM_One_CN9_NearTricappedPrism)->DenseRange(0, 2)->Unit(benchmark::kMicrosecond);
