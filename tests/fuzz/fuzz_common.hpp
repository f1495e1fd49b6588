// Shared by the fuzz targets (tests/fuzz/fuzz_<reader>.cpp): what a finding is, which exceptions are documented, and
// the graph comparison of the round-trip properties. Each target defines LLVMFuzzerTestOneInput; built with
// -DREPEL_FUZZ=ON it links libFuzzer's main, in the normal build it links replay_main.cpp and ctest replays the seed
// corpus and the regression inputs through it.
#pragma once

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <exception>
#include <sstream>
#include <string>
#include <string_view>
#include <vector>

#include "core/error.hpp"
#include "graph/molecule.hpp"
#include "graph/polyhedral_stereo.hpp"
#include "input/smiles.hpp"
#include "input/smiles_stereo.hpp"

namespace repel::fuzz {

// A property that does not hold: print it and abort, which libFuzzer records as a crash with the input.
[[noreturn]] inline void finding(const std::string& what, std::string_view input) {
    std::fprintf(stderr, "FUZZ FINDING: %s\n  input (%zu bytes): %.*s\n", what.c_str(), input.size(),
                 static_cast<int>(std::min<size_t>(input.size(), 400)), input.data());
    std::abort();
}

enum class Outcome { ok, refused };

// Runs f; InputError and UnsupportedError (the documented refusals) give Outcome::refused, with the message checked
// to be non-empty; any other exception is a finding. extra_allowed: a std::runtime_error is documented for this step
// too (the writers refuse with one).
template <class F>
Outcome guarded(const char* step, std::string_view input, F&& f, bool writer_step = false) {
    try {
        f();
        return Outcome::ok;
    } catch (const InputError& e) {
        if (std::string(e.what()).empty()) finding(std::string(step) + ": InputError without a message", input);
        return Outcome::refused;
    } catch (const UnsupportedError& e) {
        if (std::string(e.what()).empty()) finding(std::string(step) + ": UnsupportedError without a message", input);
        return Outcome::refused;
    } catch (const std::runtime_error& e) {
        if (writer_step && std::string(e.what()).rfind("cannot write", 0) == 0) return Outcome::refused;
        finding(std::string(step) + ": undocumented std::runtime_error: " + e.what(), input);
    } catch (const std::exception& e) {
        finding(std::string(step) + ": undocumented exception: " + e.what(), input);
    } catch (...) {
        finding(std::string(step) + ": a non-standard exception", input);
    }
}

// Same chirality for one centre of x and y: equal classes, and for TH/AL the neighbour lists related by a
// permutation whose parity matches the index change (a three-neighbour TH list has its lone pair placed as the
// reader places it); for SP/TB/OH the two marks put the neighbours on the same sites up to a rotation (the
// specification's tables, graph/polyhedral_stereo.hpp), whatever the two lists' orders.
inline bool same_chirality(const Atom& a, const Atom& b, int centre) {
    if (a.chiral_class != b.chiral_class) return false;
    if (a.chiral_class == ChiralClass::none) return true;
    if (a.chiral_class == ChiralClass::TH || a.chiral_class == ChiralClass::AL) {
        const int p = a.chiral_class == ChiralClass::TH
                          ? permutation_parity(with_lone_pair(a.stereo_neighbors, centre),
                                               with_lone_pair(b.stereo_neighbors, centre))
                          : permutation_parity(a.stereo_neighbors, b.stereo_neighbors);
        if (p < 0) return false;
        return b.chiral_index == (p ? 3 - a.chiral_index : a.chiral_index);
    }
    const int index = reorder_polyhedral_index(a.chiral_class, a.chiral_index, a.stereo_neighbors, b.stereo_neighbors);
    return index != 0 && index == b.chiral_index;
}

// Empty when x and y are the same graph (atoms in the same order with the same element, charge, isotope, implicit
// hydrogens and class; the same bonds with the same orders; equivalent chirality and double-bond configurations),
// else the first difference.
inline std::string graph_difference(const Molecule& x, const Molecule& y) {
    if (x.atom_count() != y.atom_count())
        return "atom count " + std::to_string(x.atom_count()) + " vs " + std::to_string(y.atom_count());
    if (x.bond_count() != y.bond_count())
        return "bond count " + std::to_string(x.bond_count()) + " vs " + std::to_string(y.bond_count());
    for (int i = 0; i < x.atom_count(); ++i) {
        const Atom& a = x.atoms[static_cast<size_t>(i)];
        const Atom& b = y.atoms[static_cast<size_t>(i)];
        const std::string at = "atom " + std::to_string(i + 1) + ": ";
        if (a.z != b.z) return at + "element";
        if (a.charge != b.charge) return at + "charge";
        if (a.isotope != b.isotope) return at + "isotope";
        if (a.hydrogens != b.hydrogens)
            return at + "hydrogens " + std::to_string(a.hydrogens) + " vs " + std::to_string(b.hydrogens);
        if (a.atom_class != b.atom_class) return at + "class";
        if (!same_chirality(a, b, i)) return at + "chirality";
    }
    for (const Bond& bx : x.bonds) {
        const std::string at = "bond " + std::to_string(bx.a + 1) + "-" + std::to_string(bx.b + 1) + ": ";
        const int k = y.bond_between(bx.a, bx.b);
        if (k < 0) return at + "lost";
        const Bond& by = y.bonds[static_cast<size_t>(k)];
        if (bx.order != by.order) return at + "order";
        if ((bx.stereo == BondStereo::none) != (by.stereo == BondStereo::none)) return at + "stereo mark";
        if (bx.stereo == BondStereo::none) continue;
        const int ra = by.a == bx.a ? by.ref_a : by.ref_b;
        const int rb = by.a == bx.a ? by.ref_b : by.ref_a;
        const int flips = (ra != bx.ref_a) + (rb != bx.ref_b);
        if ((bx.stereo == by.stereo) != (flips % 2 == 0)) return at + "configuration";
    }
    return {};
}

// Structures (read from a file, written, read again): the same elements in the same order and positions within
// tolerance (the precision of the format's coordinate fields).
inline std::string structure_difference(const Structure& x, const Structure& y, double tolerance) {
    if (x.molecule.atom_count() != y.molecule.atom_count())
        return "atom count " + std::to_string(x.molecule.atom_count()) + " vs " +
               std::to_string(y.molecule.atom_count());
    for (int i = 0; i < x.molecule.atom_count(); ++i) {
        const size_t k = static_cast<size_t>(i);
        if (x.molecule.atoms[k].z != y.molecule.atoms[k].z) return "atom " + std::to_string(i + 1) + ": element";
        for (int d = 0; d < 3; ++d)
            if (!(std::abs(x.positions[k][d] - y.positions[k][d]) <= tolerance))
                return "atom " + std::to_string(i + 1) + ": coordinate " + std::to_string(x.positions[k][d]) +
                       " came back as " + std::to_string(y.positions[k][d]);
    }
    return {};
}

inline bool all_finite(const std::vector<Eigen::Vector3d>& positions) {
    for (const auto& p : positions)
        if (!p.allFinite()) return false;
    return true;
}

// The round trip the SMILES and formula targets share: m written as SMILES reads back to the same graph. False when
// the writer refused m (a documented refusal; the caller then stops).
inline bool check_smiles_round_trip(const Molecule& m, std::string_view text, const std::string& what) {
    std::string written;
    if (guarded("write_smiles", text, [&] { written = write_smiles(m); }) != Outcome::ok) return false;
    Molecule back;
    try {
        back = read_smiles(written);
    } catch (const std::exception& e) {
        finding(what + " written as SMILES '" + written + "' does not read: " + e.what(), text);
    }
    if (const std::string d = graph_difference(m, back); !d.empty())
        finding(what + " -> '" + written + "' -> graph changed: " + d, text);
    return true;
}

}  // namespace repel::fuzz
