// Refinement time: the fixed drug set (benchmarks/drug_like.smi) as the assembly leaves it, and against atom count, for
// straight alkane chains C_n H_(2n+2) built at the model's bond lengths and tetrahedral angles and then shaken by a
// deterministic 0.05 A: a good starting structure, as the assembly gives. Time per atom should stay about constant from
// 50 to 10,000 atoms (linear scaling); the counters report the energy evaluations and the time per atom.
#include <benchmark/benchmark.h>

#include <Eigen/Geometry>
#include <cmath>
#include <cstdint>
#include <numbers>
#include <vector>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "graph/stereo.hpp"
#include "core/bond_length.hpp"
#include "domains/domains.hpp"
#include "drug_set.hpp"
#include "input/smiles.hpp"
#include "refine/contacts.hpp"
#include "refine/refine.hpp"
#include "refine/targets.hpp"
#include "refine/terms.hpp"

using namespace repel;
using Eigen::Vector3d;

namespace {

constexpr double kTetrahedral = 109.47122063449069;  // arccos(-1/3), common practice
constexpr double kDeg = std::numbers::pi / 180.0;

struct Chain {
    Molecule molecule;
    MoleculeDomains domains;
    std::vector<Vector3d> positions;
};

// The chain with the given number of atoms (rounded to whole CH2 units: 3n + 2 atoms).
Chain alkane_chain(int atoms) {
    const int carbons = std::max(1, (atoms - 2) / 3);
    Chain c;
    const double rcc = bond_length(6, 6, 1), rch = bond_length(6, 1, 1);
    const double half = 0.5 * kTetrahedral * kDeg;
    for (int k = 0; k < carbons; ++k) {
        Atom a;
        a.z = 6;
        c.molecule.add_atom(a);
        c.positions.emplace_back(k * rcc * std::sin(half), (k % 2) * rcc * std::cos(half), 0.0);
        if (k > 0) c.molecule.add_bond(k - 1, k);
    }
    for (int k = 0; k < carbons; ++k) {
        const Vector3d at = c.positions[static_cast<size_t>(k)];
        std::vector<Vector3d> bonded, dirs;
        if (k > 0) bonded.push_back((c.positions[static_cast<size_t>(k - 1)] - at).normalized());
        if (k + 1 < carbons) bonded.push_back((c.positions[static_cast<size_t>(k + 1)] - at).normalized());
        if (bonded.size() == 2) {
            const Vector3d w = -(bonded[0] + bonded[1]).normalized(), n = bonded[0].cross(bonded[1]).normalized();
            dirs = {w * std::cos(half) + n * std::sin(half), w * std::cos(half) - n * std::sin(half)};
        } else {
            // Chain end: three hydrogens tetrahedral about the one C-C bond (or four for methane).
            const Vector3d u = bonded.empty() ? Vector3d(0, 0, 1) : bonded[0];
            const Vector3d p = u.unitOrthogonal(), q = u.cross(p);
            const double t = kTetrahedral * kDeg;
            if (bonded.empty()) dirs.push_back(u);
            for (int m = 0; m < 3; ++m) {
                const double phi = 2.0 * std::numbers::pi / 3.0 * m;
                dirs.push_back(u * std::cos(t) + std::sin(t) * (p * std::cos(phi) + q * std::sin(phi)));
            }
        }
        for (const Vector3d& d : dirs) {
            Atom h;
            h.z = 1;
            const int hi = c.molecule.add_atom(h);
            c.molecule.add_bond(k, hi);
            c.positions.push_back(at + rch * d);
        }
    }
    // Deterministic shake (linear congruential generator, Knuth's MMIX constants).
    std::uint64_t s = 12345;
    auto next = [&s] {
        s = s * 6364136223846793005ull + 1442695040888963407ull;
        return static_cast<double>(s >> 11) / static_cast<double>(1ull << 53) * 2.0 - 1.0;
    };
    for (Vector3d& p : c.positions) {
        const double x = next(), y = next(), z = next();
        p += 0.05 * Vector3d(x, y, z);
    }
    for (int i = 0; i < c.molecule.atom_count(); ++i) {
        CentreDomains d;
        d.atom = i;
        d.bonded = c.molecule.degree(i);
        d.steric_number = c.molecule.atoms[static_cast<size_t>(i)].z == 6 ? 4 : 1;
        d.lone_pairs = 0;
        const auto& nb = c.molecule.neighbors(i);
        for (size_t p = 0; p < nb.size(); ++p)
            for (size_t q = p + 1; q < nb.size(); ++q) d.angles.push_back({nb[p].atom, nb[q].atom, kTetrahedral});
        c.domains.atoms.push_back(d);
    }
    return c;
}

void BM_RefineChain(benchmark::State& state) {
    const Chain chain = alkane_chain(static_cast<int>(state.range(0)));
    RefineResult last;
    for (auto _ : state) {
        std::vector<Vector3d> positions = chain.positions;
        last = refine_structure(chain.molecule, chain.domains, {}, {}, positions);
        benchmark::DoNotOptimize(positions.data());
    }
    const double atoms = chain.molecule.atom_count();
    state.counters["atoms"] = atoms;
    state.counters["evaluations"] = last.iterations;
    state.counters["converged"] = last.converged ? 1 : 0;
    state.counters["time_per_atom"] = benchmark::Counter(atoms * static_cast<double>(state.iterations()),
                                                         benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}
BENCHMARK(BM_RefineChain)->Arg(50)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

// One energy and gradient evaluation (all terms and contacts), to separate the cost per evaluation from the
// number of evaluations.
void BM_EnergyEvaluation(benchmark::State& state) {
    const Chain chain = alkane_chain(static_cast<int>(state.range(0)));
    const auto terms = refine::build_terms(chain.molecule, chain.domains, {}, {});
    refine::ContactModel contacts(chain.molecule);
    std::vector<double> x, g;
    for (const Vector3d& p : chain.positions) x.insert(x.end(), {p.x(), p.y(), p.z()});
    g.resize(x.size());
    contacts.update(x);
    for (auto _ : state) {
        std::fill(g.begin(), g.end(), 0.0);
        contacts.update(x);
        benchmark::DoNotOptimize(refine::bonded_energy(terms, x.data(), g.data()) +
                                 contacts.energy(x.data(), g.data()));
    }
    state.counters["time_per_atom"] =
        benchmark::Counter(static_cast<double>(chain.molecule.atom_count()) * static_cast<double>(state.iterations()),
                           benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}
BENCHMARK(BM_EnergyEvaluation)->Arg(50)->Arg(1000)->Arg(10000)->Unit(benchmark::kMicrosecond);

// The drug set as the assembly builds it (refinement off), refined one molecule after the other: the time per
// molecule and the mean number of energy evaluations, at the default tolerance.
struct Assembled {
    Structure structure;
    MoleculeDomains domains;
    std::vector<ChiralTarget> chiral;
    std::vector<DoubleBondTarget> double_bonds;
};

const std::vector<Assembled>& assembled_drugs() {
    static const std::vector<Assembled> set = [] {
        std::vector<Assembled> out;
        for (const bench::DrugRecord& r : bench::drug_set()) {
            Assembled a;
            a.structure = build(r.smiles, {.notation = TextNotation::smiles, .refine = false});
            a.domains = analyse_domains(a.structure.molecule);
            std::vector<std::string> warnings;
            a.chiral = chiral_targets(a.structure.molecule, warnings);
            a.double_bonds = double_bond_targets(a.structure.molecule);
            out.push_back(std::move(a));
        }
        return out;
    }();
    return set;
}

void BM_RefineDrugSet(benchmark::State& state) {
    const auto& set = assembled_drugs();
    long evaluations = 0, molecules = 0, not_converged = 0;
    for (auto _ : state) {
        for (const Assembled& a : set) {
            std::vector<Vector3d> positions = a.structure.positions;
            const RefineResult r =
                refine_structure(a.structure.molecule, a.domains, a.chiral, a.double_bonds, positions);
            benchmark::DoNotOptimize(positions.data());
            evaluations += r.iterations;
            not_converged += r.converged ? 0 : 1;
            ++molecules;
        }
    }
    state.counters["molecules"] = static_cast<double>(set.size());
    state.counters["mean_evaluations"] = static_cast<double>(evaluations) / static_cast<double>(molecules);
    state.counters["not_converged"] = static_cast<double>(not_converged) / static_cast<double>(state.iterations());
    state.counters["time_per_molecule"] =
        benchmark::Counter(static_cast<double>(molecules), benchmark::Counter::kIsRate | benchmark::Counter::kInvert);
}
BENCHMARK(BM_RefineDrugSet)->Unit(benchmark::kMillisecond);

}  // namespace
