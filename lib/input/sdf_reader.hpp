// SDF/MOL reader: CTfile V2000 and V3000 records (atoms, bonds, charges, radicals), several records separated by
// $$$$. Declared in structure_reader.hpp (read_sdf).
#pragma once

#include "input/structure_reader.hpp"
