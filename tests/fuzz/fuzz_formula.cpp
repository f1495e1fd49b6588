// Fuzz target: the formula reader (and read_species, which tries SMILES first). Properties: only the documented
// refusals escape; a formula that reads is one centre (atom 1) bonded to every other atom, with every atom explicit;
// it writes as SMILES and reads back to the same graph; it builds with finite coordinates and writes in every format.
#include "fuzz_build.hpp"
#include "input/formula.hpp"
#include "input/smiles.hpp"
#include "input/species.hpp"

using namespace repel;
using namespace repel::fuzz;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    Molecule species;
    guarded("read_species", text, [&] { species = read_species(text); });
    Molecule m;
    if (guarded("read_formula", text, [&] { m = read_formula(text); }) != Outcome::ok) return 0;
    if (m.atom_count() < 1) finding("read_formula: no atoms", text);
    for (const Bond& b : m.bonds)
        if (b.a != 0 && b.b != 0) finding("read_formula: a bond that does not involve the centre", text);
    if (m.bond_count() != m.atom_count() - 1) finding("read_formula: a ligand not bonded to the centre", text);
    for (const Atom& a : m.atoms)
        if (a.hydrogens != 0) finding("read_formula: an implicit hydrogen", text);
    if (!check_smiles_round_trip(m, text, "the formula")) return 0;
    build_and_write(std::move(m), text);
    return 0;
}
