// Sphere solver speed per steric number, for the domain patterns the fitted model really produces (bonding domains
// from bonding_domain() for real centre/ligand pairs, lone pairs and single electrons from the model), cached (a
// look-up, as for the 40 identical carbons of a drug) and cold (solve_sphere_uncached: every seed relaxed).
// Targets (issue 2): cached under 1 microsecond; cold with up to 6 domains under 200 microseconds.
// Also the whole domain analysis of a drug molecule, counting only and with directions (warm cache).
#include <benchmark/benchmark.h>

#include <string>
#include <thread>
#include <vector>

#include <repel/repel.hpp>

#include "domains/domains.hpp"
#include "domains/model.hpp"
#include "input/smiles.hpp"
#include "sphere/sphere.hpp"

using namespace repel;

namespace {

// One centre: its element, the ligands (element and bond order) and the non-bonding domains.
struct Pattern {
    int centre;
    std::vector<std::pair<int, int>> ligands;  // (atomic number, bond order)
    int lone_pairs = 0;
    int single_electrons = 0;
};

// The arrangement-stage domains of the same centre (what analyse_domains passes to solve_sphere_staged).
std::vector<SphereDomain> arrangement_of(const Pattern& p) {
    std::vector<SphereDomain> d(p.ligands.size(), arrangement_domain(DomainKind::bond));
    for (int k = 0; k < p.lone_pairs; ++k) d.push_back(arrangement_domain(DomainKind::lone_pair));
    for (int k = 0; k < p.single_electrons; ++k) d.push_back(arrangement_domain(DomainKind::single_electron));
    return d;
}

std::vector<SphereDomain> domains_of(const Pattern& p) {
    const DomainModel& m = domain_model();
    std::vector<SphereDomain> d;
    CentreKind multiple;
    multiple.lone_pairs = p.lone_pairs + p.single_electrons;
    for (const auto& [z, order] : p.ligands) {
        multiple.multiple_bond = multiple.multiple_bond || order > 1;
        if (is_heavy_ligand(z)) ++multiple.heavy_ligands;
    }
    for (const auto& [z, order] : p.ligands) d.push_back(bonding_domain(m, p.centre, z, order, multiple));
    for (int k = 0; k < p.lone_pairs; ++k) d.push_back(lone_pair_domain(m, p.centre));
    for (int k = 0; k < p.single_electrons; ++k) d.push_back(single_electron_domain(m, p.centre));
    return d;
}

constexpr int H = 1, Be = 4, B = 5, C = 6, N = 7, O = 8, F = 9, S = 16, Cl = 17, Br = 35, I = 53, Xe = 54;

std::vector<std::pair<int, int>> times(int z, int count, int order = 1) {
    return std::vector<std::pair<int, int>>(static_cast<size_t>(count), {z, order});
}

// Named after the AXE class and an example species; the steric number is the domain count.
const Pattern kBeCl2{Be, times(Cl, 2)};                              // AX2, SN 2
const Pattern kCO2{C, times(O, 2, 2)};                               // AX2 with double bonds, SN 2
const Pattern kBF3{B, times(F, 3)};                                  // AX3, SN 3
const Pattern kSO2{S, times(O, 2, 2), 1};                            // AX2E1, SN 3
const Pattern kNO2{N, times(O, 2, 2), 0, 1};                         // AX2 + single electron, SN 3
const Pattern kCH4{C, times(H, 4)};                                  // AX4, SN 4
const Pattern kNH3{N, times(H, 3), 1};                               // AX3E1, SN 4
const Pattern kH2O{O, times(H, 2), 2};                               // AX2E2, SN 4
const Pattern kCHFClBr{C, {{H, 1}, {F, 1}, {Cl, 1}, {Br, 1}}};       // AX4, four different ligands, SN 4
const Pattern kPF5{15, times(F, 5)};                                 // AX5, SN 5
const Pattern kSF4{S, times(F, 4), 1};                               // AX4E1, SN 5
const Pattern kClF3{Cl, times(F, 3), 2};                             // AX3E2, SN 5
const Pattern kXeF2{Xe, times(F, 2), 3};                             // AX2E3, SN 5
const Pattern kSF6{S, times(F, 6)};                                  // AX6, SN 6
const Pattern kBrF5{Br, times(F, 5), 1};                             // AX5E1, SN 6
const Pattern kXeF4{Xe, times(F, 4), 2};                             // AX4E2, SN 6
const Pattern kXeOF4{Xe, {{O, 2}, {F, 1}, {F, 1}, {F, 1}, {F, 1}}, 1};  // AX5E1, two ligand kinds, SN 6
const Pattern kIF7{I, times(F, 7)};                                  // AX7, SN 7
const Pattern kXeF6{Xe, times(F, 6), 1};                             // AX6E1, SN 7
const Pattern kXeF8{Xe, times(F, 8)};                                // AX8 ([XeF8]2-), SN 8

void BM_SolveSphereCached(benchmark::State& state, const Pattern& pattern) {
    const std::vector<SphereDomain> d = domains_of(pattern);
    benchmark::DoNotOptimize(solve_sphere(d));  // fills the cache
    for (auto _ : state) benchmark::DoNotOptimize(solve_sphere(d));
    state.counters["domains"] = static_cast<double>(d.size());
}

void BM_SolveSphereCold(benchmark::State& state, const Pattern& pattern) {
    const std::vector<SphereDomain> d = domains_of(pattern);
    for (auto _ : state) benchmark::DoNotOptimize(solve_sphere_uncached(d));
    state.counters["domains"] = static_cast<double>(d.size());
}

// What analyse_domains does: the staged solve. Cached: a look-up. Cold: the model stage solved afresh each time;
// the arrangement stage (one per pattern of bonds / lone pairs / single electron, a handful per run) is shared
// through its own per-thread cache after the first iteration, as it is in a real run.
void BM_SolveStagedCached(benchmark::State& state, const Pattern& pattern) {
    const std::vector<SphereDomain> a = arrangement_of(pattern), d = domains_of(pattern);
    benchmark::DoNotOptimize(solve_sphere_staged(a, d));
    for (auto _ : state) benchmark::DoNotOptimize(solve_sphere_staged(a, d));
    state.counters["domains"] = static_cast<double>(d.size());
}

void BM_SolveStagedCold(benchmark::State& state, const Pattern& pattern) {
    const std::vector<SphereDomain> a = arrangement_of(pattern), d = domains_of(pattern);
    for (auto _ : state) benchmark::DoNotOptimize(solve_sphere_staged_uncached(a, d));
    state.counters["domains"] = static_cast<double>(d.size());
}

#define REPEL_SPHERE_CASE(name)                                                                 \
    BENCHMARK_CAPTURE(BM_SolveSphereCached, name, k##name)->Unit(benchmark::kNanosecond);       \
    BENCHMARK_CAPTURE(BM_SolveSphereCold, name, k##name)->Unit(benchmark::kMicrosecond);        \
    BENCHMARK_CAPTURE(BM_SolveStagedCached, name, k##name)->Unit(benchmark::kNanosecond);       \
    BENCHMARK_CAPTURE(BM_SolveStagedCold, name, k##name)->Unit(benchmark::kMicrosecond)

REPEL_SPHERE_CASE(BeCl2);
REPEL_SPHERE_CASE(CO2);
REPEL_SPHERE_CASE(BF3);
REPEL_SPHERE_CASE(SO2);
REPEL_SPHERE_CASE(NO2);
REPEL_SPHERE_CASE(CH4);
REPEL_SPHERE_CASE(NH3);
REPEL_SPHERE_CASE(H2O);
REPEL_SPHERE_CASE(CHFClBr);
REPEL_SPHERE_CASE(PF5);
REPEL_SPHERE_CASE(SF4);
REPEL_SPHERE_CASE(ClF3);
REPEL_SPHERE_CASE(XeF2);
REPEL_SPHERE_CASE(SF6);
REPEL_SPHERE_CASE(BrF5);
REPEL_SPHERE_CASE(XeF4);
REPEL_SPHERE_CASE(XeOF4);
REPEL_SPHERE_CASE(IF7);
REPEL_SPHERE_CASE(XeF6);
REPEL_SPHERE_CASE(XeF8);

// Imatinib (37 heavy atoms, 68 with hydrogens): the domain analysis of every atom, counting only and with the
// directions from the (warm) sphere cache. items = atoms.
Molecule imatinib() {
    return read_molecule("Cc1ccc(NC(=O)c2ccc(CN3CCN(C)CC3)cc2)cc1Nc1nccc(-c2cccnc2)n1", {.notation = TextNotation::smiles});
}

void BM_AnalyseDomainsCount(benchmark::State& state) {
    const Molecule m = imatinib();
    for (auto _ : state) benchmark::DoNotOptimize(analyse_domains(m, false));
    state.SetItemsProcessed(state.iterations() * m.atom_count());
    state.counters["atoms"] = m.atom_count();
}
BENCHMARK(BM_AnalyseDomainsCount)->Unit(benchmark::kMicrosecond);

void BM_AnalyseDomainsSolved(benchmark::State& state) {
    const Molecule m = imatinib();
    benchmark::DoNotOptimize(analyse_domains(m, true));  // fills the cache
    for (auto _ : state) benchmark::DoNotOptimize(analyse_domains(m, true));
    state.SetItemsProcessed(state.iterations() * m.atom_count());
    state.counters["atoms"] = m.atom_count();
}
BENCHMARK(BM_AnalyseDomainsSolved)->Unit(benchmark::kMicrosecond);

// The same in a new thread each time: the sphere cache is per thread, so every distinct weight pattern of the
// molecule is solved cold, as for the first molecule a process builds. Includes starting the thread (tens of us).
void BM_AnalyseDomainsColdCache(benchmark::State& state) {
    const Molecule m = imatinib();
    for (auto _ : state) {
        std::thread worker([&m] { benchmark::DoNotOptimize(analyse_domains(m, true)); });
        worker.join();
    }
    state.SetItemsProcessed(state.iterations() * m.atom_count());
    state.counters["atoms"] = m.atom_count();
    state.SetLabel("real time: the work runs in another thread");
}
BENCHMARK(BM_AnalyseDomainsColdCache)->Unit(benchmark::kMicrosecond)->UseRealTime();

}  // namespace
