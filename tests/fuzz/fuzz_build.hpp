// The rest of the pipeline for a small molecule a fuzz target has read: hydrogens made explicit, built, written in
// every format. Properties: only the documented refusals escape, every coordinate is finite, every writer writes
// the structure whole (or refuses it as documented), warnings reach every format that has a place for them.
#pragma once

#include <cctype>

#include "assemble/build.hpp"
#include "assemble/ensemble.hpp"
#include "fuzz_common.hpp"
#include "output/writer.hpp"

namespace repel::fuzz {

// Larger molecules are left to the unit tests and benchmarks: a fuzz run wants many executions per second.
constexpr int kBuildAtomLimit = 24;

// A written number that is not one: a whole token "nan", "inf" (any sign or case) or a JSON null. Tokens, not
// substrings, since warnings are words ("resonance" holds "nan").
inline bool has_non_finite_token(const std::string& text) {
    std::string token;
    auto bad = [&] {
        std::string t;
        for (char ch : token) t += static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
        if (!t.empty() && (t[0] == '-' || t[0] == '+')) t.erase(0, 1);
        return t == "nan" || t == "inf" || t == "infinity" || t == "null";
    };
    for (char ch : text) {
        if (std::isspace(static_cast<unsigned char>(ch)) || ch == ',' || ch == ':' || ch == '[' || ch == ']' ||
            ch == '{' || ch == '}') {
            if (bad()) return true;
            token.clear();
        } else {
            token += ch;
        }
    }
    return bad();
}

inline void build_and_write(Molecule m, std::string_view input) {
    int total = m.atom_count();
    for (const Atom& a : m.atoms) total += a.hydrogens;
    if (total > kBuildAtomLimit) return;
    m.make_hydrogens_explicit();
    Structure s;
    if (guarded("build_structure", input, [&] { s = build_structure(m); }) != Outcome::ok) return;
    if (s.positions.size() != static_cast<size_t>(s.molecule.atom_count()))
        finding("build_structure: positions and atoms differ in number", input);
    if (!all_finite(s.positions)) finding("build_structure: a non-finite coordinate", input);
    for (Format f : {Format::xyz, Format::pdb, Format::sdf, Format::json}) {
        const auto writer = make_writer(f);
        std::string text;
        if (guarded("write", input, [&] { text = writer->record(s, "fuzz"); }, true) != Outcome::ok) continue;
        if (text.empty() || text.back() != '\n') finding("a writer returned a record without its final newline", input);
        if (has_non_finite_token(text)) finding("a writer wrote nan, inf or a JSON null", input);
        if (f != Format::pdb)
            for (const std::string& w : s.warnings)
                if (text.find(w.substr(0, std::min<size_t>(w.size(), 20))) == std::string::npos)
                    finding("a warning is missing from the written record: " + w, input);
    }
    // A small conformer ensemble of the same molecule (`repel build --conformers 3`): the same refusals only, every
    // conformer finite and numbered, the first no higher in energy than the others.
    EnsembleOptions three;
    three.count = 3;
    three.tries = 6;
    std::vector<Structure> e;
    if (guarded("build_ensemble", input, [&] { e = build_ensemble(m, BuildOptions{}, three); }) != Outcome::ok) return;
    if (e.empty() || e.size() > 3) finding("build_ensemble: an ensemble of the wrong size", input);
    for (const Structure& c : e) {
        if (!all_finite(c.positions)) finding("build_ensemble: a non-finite coordinate", input);
        if (!c.conformer || c.conformer->count != static_cast<int>(e.size()) || c.conformer->relative_energy < 0)
            finding("build_ensemble: a conformer numbered wrong or below the first", input);
    }
}

}  // namespace repel::fuzz
