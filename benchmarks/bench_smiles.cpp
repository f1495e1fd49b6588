// SMILES reading speed per atom: the drug set (benchmarks/drug_like.smi), long chains written in code (a
// poly(ethylene glycol) chain, and polystyrene with one aromatic ring per repeat unit to load ring closures and
// kekulization), and the hydrogen step (Molecule::make_hydrogens_explicit) on the same inputs.
// items = heavy atoms read (the SMILES atoms; implicit hydrogens are counts at this stage).
#include <benchmark/benchmark.h>

#include <string>
#include <vector>

#include "drug_set.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {

// HO-(CH2CH2O)n-H: 3 heavy atoms per unit.
std::string peg_smiles(int heavy_atoms) {
    std::string s = "O";
    for (int k = 0; k < heavy_atoms / 3; ++k) s += "CCO";
    return s;
}

// H-(CH2-CH(C6H5))n-H: 8 heavy atoms and one aromatic ring closure per unit (ring-closure digit reused).
std::string polystyrene_smiles(int heavy_atoms) {
    std::string s;
    for (int k = 0; k < std::max(1, heavy_atoms / 8); ++k) s += "CC(c1ccccc1)";
    return s;
}

void BM_ReadDrugSet(benchmark::State& state) {
    const auto& set = bench::drug_set();
    long atoms = 0;
    for (const auto& r : set) atoms += read_smiles(r.smiles).atom_count();
    for (auto _ : state)
        for (const auto& r : set) benchmark::DoNotOptimize(read_smiles(r.smiles));
    state.SetItemsProcessed(state.iterations() * atoms);
    state.counters["molecules"] = static_cast<double>(set.size());
    state.counters["molecules_per_s"] = benchmark::Counter(static_cast<double>(set.size()) * static_cast<double>(state.iterations()),
                                                           benchmark::Counter::kIsRate);
}
BENCHMARK(BM_ReadDrugSet)->Unit(benchmark::kMicrosecond);

void read_chain(benchmark::State& state, const std::string& text) {
    const int atoms = read_smiles(text).atom_count();
    for (auto _ : state) benchmark::DoNotOptimize(read_smiles(text));
    state.SetItemsProcessed(state.iterations() * atoms);
    state.counters["atoms"] = atoms;
}

void BM_ReadPEG(benchmark::State& state) { read_chain(state, peg_smiles(static_cast<int>(state.range(0)))); }
BENCHMARK(BM_ReadPEG)->Arg(300)->Arg(3000)->Arg(30000)->Unit(benchmark::kMicrosecond);

void BM_ReadPolystyrene(benchmark::State& state) {
    read_chain(state, polystyrene_smiles(static_cast<int>(state.range(0))));
}
BENCHMARK(BM_ReadPolystyrene)->Arg(320)->Arg(3200)->Arg(32000)->Unit(benchmark::kMicrosecond);

// The hydrogen step alone. The copy of the molecule it works on is inside the timed loop; BM_CopyDrugSet measures
// that copy so that it can be subtracted. items = atoms after the step (heavy atoms and hydrogens).
std::vector<Molecule> read_drug_set() {
    std::vector<Molecule> out;
    for (const auto& r : bench::drug_set()) out.push_back(read_smiles(r.smiles));
    return out;
}

long explicit_atoms(const std::vector<Molecule>& set) {
    long atoms = 0;
    for (Molecule m : set) {
        m.make_hydrogens_explicit();
        atoms += m.atom_count();
    }
    return atoms;
}

void BM_MakeHydrogensExplicitDrugSet(benchmark::State& state) {
    const std::vector<Molecule> set = read_drug_set();
    for (auto _ : state)
        for (const Molecule& original : set) {
            Molecule m = original;
            m.make_hydrogens_explicit();
            benchmark::DoNotOptimize(m.atoms.data());
        }
    state.SetItemsProcessed(state.iterations() * explicit_atoms(set));
}
BENCHMARK(BM_MakeHydrogensExplicitDrugSet)->Unit(benchmark::kMicrosecond);

void BM_CopyDrugSet(benchmark::State& state) {
    const std::vector<Molecule> set = read_drug_set();
    for (auto _ : state)
        for (const Molecule& original : set) {
            Molecule m = original;
            benchmark::DoNotOptimize(m.atoms.data());
        }
    state.SetItemsProcessed(state.iterations() * explicit_atoms(set));
}
BENCHMARK(BM_CopyDrugSet)->Unit(benchmark::kMicrosecond);

void BM_MakeHydrogensExplicitPEG(benchmark::State& state) {
    const Molecule original = read_smiles(peg_smiles(static_cast<int>(state.range(0))));
    Molecule probe = original;
    probe.make_hydrogens_explicit();
    for (auto _ : state) {
        Molecule m = original;
        m.make_hydrogens_explicit();
        benchmark::DoNotOptimize(m.atoms.data());
    }
    state.SetItemsProcessed(state.iterations() * probe.atom_count());
    state.counters["atoms"] = probe.atom_count();
}
BENCHMARK(BM_MakeHydrogensExplicitPEG)->Arg(3000)->Arg(30000)->Unit(benchmark::kMicrosecond);

}  // namespace
