// Conformer ensembles: the drug set (benchmarks/drug_like.smi) built as ten conformers each (build_ensemble, the
// default tries: 20 candidates) against one build each (build_structure), one core. The target (issue 16): ten
// conformers of a drug-sized molecule in at most 10 times the time of one build; compare the molecules_per_s
// counters of BM_OneBuild and BM_TenConformers.
#include <benchmark/benchmark.h>

#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "assemble/ensemble.hpp"
#include "drug_set.hpp"

using namespace repel;

namespace {

const std::vector<Molecule>& drug_molecules() {
    static const std::vector<Molecule> molecules = [] {
        std::vector<Molecule> out;
        for (const auto& r : bench::drug_set()) {
            try {
                Molecule m = read_molecule(r.smiles, {.notation = TextNotation::smiles});
                build_structure(m);
                out.push_back(std::move(m));
            } catch (const std::exception&) {
            }
        }
        return out;
    }();
    return molecules;
}

void report(benchmark::State& state, double conformers) {
    const double n = static_cast<double>(drug_molecules().size());
    state.counters["molecules"] = n;
    state.counters["conformers_per_molecule"] = conformers / n;
    state.counters["molecules_per_s"] =
        benchmark::Counter(n * static_cast<double>(state.iterations()), benchmark::Counter::kIsRate);
}

void BM_OneBuild(benchmark::State& state) {
    for (auto _ : state)
        for (const Molecule& m : drug_molecules()) benchmark::DoNotOptimize(build_structure(m));
    report(state, static_cast<double>(drug_molecules().size()));
}
BENCHMARK(BM_OneBuild)->Unit(benchmark::kMillisecond);

void BM_TenConformers(benchmark::State& state) {
    EnsembleOptions options;
    options.count = 10;
    options.tries = static_cast<int>(state.range(0));
    double conformers = 0;
    for (auto _ : state) {
        conformers = 0;
        for (const Molecule& m : drug_molecules()) {
            const std::vector<Structure> e = build_ensemble(m, BuildOptions{}, options);
            conformers += static_cast<double>(e.size());
            benchmark::DoNotOptimize(e);
        }
    }
    report(state, conformers);
}
// Arg: candidates refined per molecule (0: the default, 20 for ten conformers).
BENCHMARK(BM_TenConformers)->ArgName("tries")->Arg(0)->Arg(15)->Arg(30)->Unit(benchmark::kMillisecond);

}  // namespace
