// Fuzz target: the SMILES reader. Properties: only InputError/UnsupportedError escape; a SMILES that reads gives a
// consistent graph, writes back (write_smiles) and reads again to the same graph (elements, charges, isotopes,
// hydrogen counts, classes, bonds and orders, chirality and double-bond configurations); a small molecule builds with
// finite coordinates and every writer writes it whole.
#include "fuzz_build.hpp"
#include "input/smiles.hpp"

using namespace repel;
using namespace repel::fuzz;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    Molecule m;
    if (guarded("read_smiles", text, [&] { m = read_smiles(text); }) != Outcome::ok) return 0;
    if (m.atom_count() == 0) finding("read_smiles: a molecule without atoms", text);
    for (int i = 0; i < m.bond_count(); ++i) {
        const Bond& b = m.bonds[static_cast<size_t>(i)];
        if (b.a < 0 || b.b < 0 || b.a >= m.atom_count() || b.b >= m.atom_count() || b.a == b.b)
            finding("read_smiles: a bond with a bad atom index", text);
        if (m.bond_between(b.a, b.b) != i) finding("read_smiles: a duplicated bond", text);
        if (b.order < 1 || b.order > 4) finding("read_smiles: a bond order outside 1..4", text);
    }
    for (const Atom& a : m.atoms)
        if (a.hydrogens < 0 || a.charge < -15 || a.charge > 15) finding("read_smiles: hydrogens or charge out of range", text);
    if (!check_smiles_round_trip(m, text, "the molecule")) return 0;
    build_and_write(std::move(m), text);
    return 0;
}
