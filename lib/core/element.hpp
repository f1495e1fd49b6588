// Element data, H to Rn: symbol, period, group, valence electrons, electronegativity and radii, each table with its
// published source beside it in element.cpp.
#pragma once

#include <string_view>

namespace repel {

constexpr int kMaxElement = 86;  // H .. Rn

struct ElementData {
    int number = 0;               // atomic number Z
    std::string_view symbol;      // "C", "Cl"
    int period = 0;               // 1..6
    int group = 0;                // IUPAC group 1..18; 3 for the lanthanides
    int valence_electrons = 0;    // electrons outside the noble-gas core (main group: group or group-10)
    double electronegativity = 0; // Pauling scale (Allred 1961); 0 where none is tabulated (He, Ne, Ar, Pm, Eu, Tb, Yb)
    double r_single = 0;          // covalent radius for a single bond, Angstrom (Pyykko and Atsumi 2009)
    double r_double = 0;          // covalent radius for a double bond, Angstrom; 0 where not tabulated
    double r_triple = 0;          // covalent radius for a triple bond, Angstrom; 0 where not tabulated
    double r_perception = 0;      // covalent radius for bond perception from coordinates (Cordero et al. 2008)
    double r_vdw = 0;             // van der Waals radius, Angstrom (main group: Bondi 1964 completed by Mantina et al.
                                  // 2009; d and f block: Alvarez 2013); 0 where not tabulated (Pm)
    double mass = 0;              // standard atomic weight (IUPAC), for file formats that want it
};

// Data for atomic number z (1..kMaxElement). Throws std::out_of_range outside that range.
const ElementData& element(int z);

// Atomic number for a symbol with its usual capitalisation ("Cl"); 0 when the symbol is not an element H..Rn.
int element_number(std::string_view symbol);

// True for the d- and f-block metals (groups 3-12 and the lanthanides), which the domain model does not yet handle.
bool is_transition_metal(int z);

// True for the metals the metal model (domains/metal.cpp) covers: the d block (groups 3-12 of periods 4-6, without the lanthanides).
bool is_d_block_metal(int z);
// True for the lanthanides (La-Lu): f-block centres, refused with a message.
bool is_f_block_metal(int z);

}  // namespace repel
