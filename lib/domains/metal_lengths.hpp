// Metal-ligand bond lengths: ionic radii for hard donors of metals in positive oxidation states, covalent radii for
// the rest; every value with its source in metal_lengths.cpp.
#pragma once

namespace repel {

// What a metal-ligand distance depends on.
struct MetalLigandBond {
    int metal_z = 0;
    int oxidation_state = 0;
    int d_electrons = 0;
    int coordination_number = 0;
    bool high_spin = false;
    bool square_planar = false;
    int donor_z = 0;
    int donor_charge = 0;
    int order = 1;              // written order of the bond to the metal
    int hapto = 0;              // atoms of a hapto ligand (0: a sigma donor); the length is to each of them
    int donor_degree = 0;       // the donor's bonds to non-metals
    bool donor_multiple = false;// the donor has a multiple or aromatic bond of its own (CO, CN-, pyridine)
    int donor_partner_z = 0;    // the element of the donor's one non-metal neighbour, when it has one (O in CO)
    int covalent = 0;           // electrons its ligand takes from the metal (X-type units)
    bool yl = false;            // the one terminal oxo (or nitrido) of a centre whose other ligands are sigma donors
    bool carbene_donor = false; // a heteroatom-stabilised carbene (NHC, Fischer): a dative single bond however written
    int valence_electrons = 0;  // the centre's electron count (d electrons + 2 per coordination site), for hapto
};

// Distance in Angstrom from the metal to the donor atom (to each atom of a hapto ligand).
double metal_ligand_length(const MetalLigandBond& bond);

// Effective ionic radius (Shannon) of the metal in that oxidation state, coordination number and spin state, or 0
// where the table has none.
double metal_ionic_radius(int z, int oxidation_state, int coordination_number, bool high_spin, bool square_planar);

// Metal-metal bond length (Angstrom).
double metal_metal_length(int za, int zb, int order);

}  // namespace repel
