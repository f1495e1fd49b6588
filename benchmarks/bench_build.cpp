// Whole-molecule building speed: build_structure on the drug set (benchmarks/drug_like.smi), with and without the
// refinement, and from text (read_smiles + make_hydrogens_explicit + build_structure, what `repel build` does per
// record minus the writer); and single large molecules written as SMILES in code. One core.
// Targets (issue 3): at least 1,000 drug-sized molecules per second per core; a 10,000-atom molecule in under 2 s.
#include <benchmark/benchmark.h>

#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "drug_set.hpp"
#include "input/smiles.hpp"

using namespace repel;

namespace {

struct Prepared {
    std::vector<Molecule> molecules;  // hydrogens explicit; only those that build (see the failed counter)
    long atoms = 0;
    int failed = 0;
};

Molecule prepare(const std::string& smiles) { return read_molecule(smiles, {.notation = TextNotation::smiles}); }

// The drug set, keeping the molecules that build once with these options without an exception; failures are
// counted (the failed counter), not timed.
Prepared prepare_set(const BuildOptions& options) {
    Prepared out;
    for (const auto& r : bench::drug_set()) {
        try {
            Molecule m = prepare(r.smiles);
            build_structure(m, options);
            out.atoms += m.atom_count();
            out.molecules.push_back(std::move(m));
        } catch (const std::exception&) {
            ++out.failed;
        }
    }
    return out;
}

BuildOptions with_refine(bool refine) {
    BuildOptions options;
    options.refine = refine;
    return options;
}

const Prepared& drug_molecules(bool refine) {
    static const Prepared refined = prepare_set(with_refine(true));
    static const Prepared assembled = prepare_set(with_refine(false));
    return refine ? refined : assembled;
}

void report_set(benchmark::State& state, const Prepared& p) {
    const double n = static_cast<double>(p.molecules.size());
    state.counters["molecules"] = n;
    state.counters["failed"] = p.failed;
    state.counters["molecules_per_s"] = benchmark::Counter(n * static_cast<double>(state.iterations()),
                                                           benchmark::Counter::kIsRate);
    state.SetItemsProcessed(state.iterations() * p.atoms);
}

void BM_BuildDrugSet(benchmark::State& state) {
    const BuildOptions options = with_refine(state.range(0) != 0);
    const Prepared& p = drug_molecules(options.refine);
    for (auto _ : state)
        for (const Molecule& m : p.molecules) benchmark::DoNotOptimize(build_structure(m, options));
    report_set(state, p);
}
// Arg 1: assembly and refinement (the default); Arg 0: assembly only (its overlap check runs on the unrefined
// coordinates, so a few molecules may fail there that build with refinement: see the failed counter).
BENCHMARK(BM_BuildDrugSet)->ArgName("refine")->Arg(1)->Arg(0)->Unit(benchmark::kMillisecond);

void BM_BuildDrugSetFromText(benchmark::State& state) {
    const Prepared& p = drug_molecules(true);
    std::vector<std::string> texts;
    for (const auto& r : bench::drug_set()) {
        try {
            build_structure(prepare(r.smiles));
            texts.push_back(r.smiles);
        } catch (const std::exception&) {
        }
    }
    for (auto _ : state)
        for (const std::string& t : texts) benchmark::DoNotOptimize(build_structure(prepare(t)));
    report_set(state, p);
}
BENCHMARK(BM_BuildDrugSetFromText)->Unit(benchmark::kMillisecond);

// The metal complexes of tests/data/metal_complexes.tsv (99 complexes, 2 to 9 coordination sites, chelates,
// hapto ligands), from text: what `repel build` does per record minus the writer.
void BM_BuildMetalComplexes(benchmark::State& state) {
    std::vector<std::string> texts;
    std::ifstream table(REPEL_SOURCE_DIR "/tests/data/metal_complexes.tsv");
    for (std::string line; std::getline(table, line);) {
        if (line.empty() || line[0] == '#' || line.rfind("name\t", 0) == 0) continue;
        std::istringstream fields(line);
        std::string name, smiles;
        std::getline(fields, name, '\t');
        std::getline(fields, smiles, '\t');
        try {
            build_structure(prepare(smiles));
            texts.push_back(smiles);
        } catch (const std::exception&) {
        }
    }
    if (texts.empty()) {
        state.SkipWithError("no complexes read from tests/data/metal_complexes.tsv");
        return;
    }
    for (auto _ : state)
        for (const std::string& t : texts) benchmark::DoNotOptimize(build_structure(prepare(t)));
    state.counters["complexes"] = static_cast<double>(texts.size());
    state.counters["complexes_per_s"] =
        benchmark::Counter(static_cast<double>(texts.size()) * static_cast<double>(state.iterations()),
                           benchmark::Counter::kIsRate);
}
BENCHMARK(BM_BuildMetalComplexes)->Unit(benchmark::kMillisecond);

// Large molecules. HO-(CH2CH2O)n-H: 7 atoms per unit with hydrogens.
std::string peg_smiles(int atoms) {
    std::string s = "O";
    for (int k = 0; k < (atoms - 2) / 7; ++k) s += "CCO";
    return s;
}

// L-polyalanine H-(NH-CH(CH3)-CO)n-OH: 10 atoms per residue with hydrogens, one stereocentre each.
std::string polyalanine_smiles(int atoms) {
    std::string s;
    for (int k = 0; k < (atoms - 3) / 10; ++k) s += "N[C@@H](C)C(=O)";
    return s + "O";
}

void build_large(benchmark::State& state, const std::string& smiles) {
    const Molecule m = prepare(smiles);
    std::string error;
    for (auto _ : state) {
        try {
            benchmark::DoNotOptimize(build_structure(m));
        } catch (const std::exception& e) {
            error = e.what();
            break;
        }
    }
    if (!error.empty()) state.SkipWithError(("build_structure failed: " + error).c_str());
    state.counters["atoms"] = m.atom_count();
}

void BM_BuildPEG(benchmark::State& state) { build_large(state, peg_smiles(static_cast<int>(state.range(0)))); }
BENCHMARK(BM_BuildPEG)->Arg(1000)->Arg(3000)->Arg(10000)->Unit(benchmark::kMillisecond)->Iterations(1);

void BM_BuildPolyalanine(benchmark::State& state) {
    build_large(state, polyalanine_smiles(static_cast<int>(state.range(0))));
}
BENCHMARK(BM_BuildPolyalanine)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond)->Iterations(1);

}  // namespace
