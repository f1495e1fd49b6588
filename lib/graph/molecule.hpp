// The molecular graph: atoms, bonds, stereo marks as written, and (once built) coordinates.
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace repel {

// OpenSMILES chirality classes. '@' is TH1 and '@@' is TH2 (anticlockwise / clockwise looking from the first
// neighbour); the other classes carry their number in Atom::chiral_index.
enum class ChiralClass : std::uint8_t { none, TH, AL, SP, TB, OH };

// Stands in Atom::stereo_neighbors for the implicit hydrogen of a bracket atom ([C@H]) until hydrogens are explicit.
constexpr int kImplicitHydrogen = -1;

struct Atom {
    int z = 0;                 // atomic number
    int charge = 0;            // formal charge
    int isotope = 0;           // mass number, 0 when not given
    int hydrogens = 0;         // implicit hydrogens still to add (bracket H count, or organic-subset normal valence)
    int atom_class = 0;        // OpenSMILES atom class (:n), 0 when not given
    int radical_electrons = -1;// unpaired electrons when a file states them (SDF RAD); -1: derive from the valence
    bool aromatic = false;     // written aromatic (lower case); kept after kekulization
    bool bracket = false;      // written in brackets
    int column = 0;            // 1-based column of the atom in the input line (0 when not from text)
    int parent = -1;           // for a hydrogen added from an implicit count: its heavy atom; -1 otherwise

    ChiralClass chiral_class = ChiralClass::none;
    int chiral_index = 0;      // TH 1..2 (@, @@), AL 1..2, SP 1..3, TB 1..20, OH 1..30
    // Neighbours in the order that the chirality refers to (OpenSMILES: the preceding atom, then an implicit H,
    // then ring closures in the order written, then branches and the next atom). kImplicitHydrogen marks the
    // implicit hydrogen until make_hydrogens_explicit() replaces it by the atom index.
    std::vector<int> stereo_neighbors;
};

enum class BondStereo : std::uint8_t { none, cis, trans };

struct Bond {
    int a = 0, b = 0;          // atom indices; a is the atom written first
    int order = 1;             // 1, 2, 3, 4 ('$'); kekulized for aromatic bonds
    bool aromatic = false;     // written or perceived aromatic
    // '/' or '\' on a single bond, as written from a to b: +1 for '/', -1 for '\', 0 for none.
    int direction = 0;
    // For a double bond: the configuration of ref_a (a neighbour of a) and ref_b (a neighbour of b).
    BondStereo stereo = BondStereo::none;
    int ref_a = -1, ref_b = -1;

    int other(int atom) const { return atom == a ? b : a; }
};

struct Neighbor {
    int atom;  // the neighbouring atom
    int bond;  // index into Molecule::bonds
};

// `atoms` and `bonds` are public (the readers, the analysis and the tests edit atoms' and bonds' fields in place), and
// the neighbour lists are a cache of `bonds`. The cache stays right through add_atom, add_bond, set_bonds and
// rebuild_adjacency. A change of either vector's size made around them (a push_back, an erase, an assignment) is
// detected: neighbors() and degree() throw std::logic_error rather than answer from a stale cache, and add_atom and
// add_bond rebuild it first. Moving a bond's ends in place keeps the sizes and is not detected: use set_bonds().
class Molecule {
public:
    std::string name;
    std::vector<Atom> atoms;
    std::vector<Bond> bonds;

    int add_atom(const Atom& atom);
    // Adds a bond and returns its index. Does not check for duplicates: readers check with bond_between() first.
    int add_bond(int a, int b, int order = 1, bool aromatic = false);
    // Replaces every bond (a subset kept, say) and rebuilds the neighbour lists.
    void set_bonds(std::vector<Bond> new_bonds);

    int atom_count() const { return static_cast<int>(atoms.size()); }
    int bond_count() const { return static_cast<int>(bonds.size()); }
    const std::vector<Neighbor>& neighbors(int atom) const {
        require_current_adjacency();
        return adjacency_[static_cast<size_t>(atom)];
    }
    int degree(int atom) const { return static_cast<int>(neighbors(atom).size()); }
    // Index of the bond between a and b, or -1.
    int bond_between(int a, int b) const;
    // Sum of bond orders at the atom (explicit bonds only; add implicit hydrogens for the full valence).
    int bond_order_sum(int atom) const;
    int total_charge() const;

    // Appends one H atom per implicit hydrogen, grouped by parent atom in parent order (the atom order of the
    // command-line contract), bonds them, and replaces kImplicitHydrogen in stereo_neighbors by the new atom.
    void make_hydrogens_explicit();

    // Atoms as written in the input (the rest were added by make_hydrogens_explicit()).
    int input_atom_count() const { return input_atoms_ < 0 ? atom_count() : input_atoms_; }

    // Connected components: for each atom its component number (0-based, numbered by first atom).
    std::vector<int> components(int* count = nullptr) const;

    // Rebuilds the neighbour lists from `atoms` and `bonds` (after editing them directly).
    void rebuild_adjacency();
    // The neighbour lists were built for the present atoms and bonds (as far as their counts tell).
    bool adjacency_current() const {
        return adjacency_.size() == atoms.size() && adjacency_bonds_ == bonds.size();
    }

private:
    void require_current_adjacency() const {
        if (!adjacency_current()) stale_adjacency();
    }
    [[noreturn]] void stale_adjacency() const;

    std::vector<std::vector<Neighbor>> adjacency_;
    size_t adjacency_bonds_ = 0;  // bonds.size() the neighbour lists were built for
    int input_atoms_ = -1;
};

// A molecule with coordinates: what the builder writes and what the checker reads.
// A member of a conformer ensemble (repel build --conformers): its place, energy and distance from the first.
struct ConformerInfo {
    int rank = 1;                // 1: the lowest energy
    int count = 1;               // conformers in the ensemble
    double energy = 0;           // the ranking energy, kcal/mol
    double relative_energy = 0;  // above the first, kcal/mol
    double rmsd_to_first = 0;    // Angstrom, heavy atoms superposed, symmetry-equivalent atoms matched
};

struct Structure {
    Molecule molecule;
    std::vector<Eigen::Vector3d> positions;  // Angstrom, one per atom
    int charge = 0;                          // total charge
    int multiplicity = 1;                    // 2S+1
    std::string multiplicity_reason;         // how the multiplicity was decided, where more than a count went into it
    std::vector<std::string> warnings;       // known weaknesses of this structure, for the user and the file
    std::optional<ConformerInfo> conformer;  // set for the members of a conformer ensemble; the writers carry it
};

// One structure as a file states it, with what the file said and did not say: what the readers of XYZ, PDB and SDF
// files give (input/structure_reader.hpp) and what the audit reads; part of the installed header set (the front door
// returns it).
struct StructureRecord {
    Structure structure;        // atoms (z, formal charges, SDF radicals), bonds when stated, positions
    std::string title;          // the name, comment or title line; may be empty
    long line = 0;              // 1-based line where the record starts
    bool has_bonds = false;     // the file states connectivity (SDF bonds, PDB CONECT)
    bool has_orders = false;    // ... and bond orders (SDF; aromatic SDF bonds still need orders, see needs_orders)
    bool has_charge = false;    // the total charge was stated (XYZ charge=, SDF or PDB formal charges)
    bool has_multiplicity = false;  // XYZ multiplicity=
    std::vector<int> needs_orders;  // bonds stated aromatic (SDF type 4) whose orders are still to be assigned
    // SDF: each bond's drawn stereo, in V2000's numbers (1 wedge, 6 hash, 4 either, 0 none; V3000's CFG=1, 3, 2 are
    // given as 1, 6, 4), one per bond; the first atom of a bond is its narrow end. Empty for other formats.
    std::vector<int> bond_stereo;
};

}  // namespace repel
