// PDB reader: ATOM/HETATM records with the element in columns 77-78 (and a formal charge in 79-80), CONECT
// connectivity, MODEL/ENDMDL and END separating structures. Declared in structure_reader.hpp (read_pdb).
#pragma once

#include "input/structure_reader.hpp"
