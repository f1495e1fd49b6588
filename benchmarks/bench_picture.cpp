// Drawing speed: the SVG picture of a 10,000-atom structure (issue 17: under a second), and the check report page's
// share of one such structure (its entry: principal view, coordinates, SVG picture; then the whole page). One core.
// The structure is a built L-polyalanine of 9,993 atoms (a folded chain, so depth sorting has real work to do).
#include <benchmark/benchmark.h>

#include <string>

#include <repel/repel.hpp>

#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "check/report_page.hpp"
#include "input/smiles.hpp"
#include "output/picture.hpp"

using namespace repel;

namespace {

// L-polyalanine H-(NH-CH(CH3)-CO)n-OH: 10 atoms per residue with hydrogens (as in bench_build.cpp).
const Structure& large_structure() {
    static const Structure s = [] {
        std::string smiles;
        for (int k = 0; k < 999; ++k) smiles += "N[C@@H](C)C(=O)";
        return build(smiles + "O", {.notation = TextNotation::smiles});
    }();
    return s;
}

void BM_PictureSvg(benchmark::State& state) {
    const Structure& s = large_structure();
    PictureOptions o;
    o.title = "polyalanine";
    o.hydrogens = state.range(0) != 0;
    size_t bytes = 0;
    for (auto _ : state) {
        const std::string svg = picture_svg(s, o);
        bytes = svg.size();
        benchmark::DoNotOptimize(svg.data());
    }
    state.counters["atoms"] = s.molecule.atom_count();
    state.counters["bytes"] = static_cast<double>(bytes);
}
BENCHMARK(BM_PictureSvg)->ArgName("hydrogens")->Arg(1)->Arg(0)->Unit(benchmark::kMillisecond);

// One report entry and the page around it (the audit itself is not timed: it belongs to `repel check`).
void BM_ReportPageEntry(benchmark::State& state) {
    const Structure& s = large_structure();
    Audit audit;
    audit.title = "polyalanine";
    audit.structure = s;
    size_t bytes = 0;
    for (auto _ : state) {
        ReportPage page("bench");
        page.add(audit, 1, "polyalanine.xyz");
        const std::string html = page.html();
        bytes = html.size();
        benchmark::DoNotOptimize(html.data());
    }
    state.counters["atoms"] = s.molecule.atom_count();
    state.counters["bytes"] = static_cast<double>(bytes);
}
BENCHMARK(BM_ReportPageEntry)->Unit(benchmark::kMillisecond);

}  // namespace
