// XYZ reader: one or more frames of `count`, a comment line (key=value pairs such as charge= and multiplicity= are
// read), and `Element x y z` lines in Angstrom. XYZ states no bonds. Declared in structure_reader.hpp (read_xyz).
#pragma once

#include "input/structure_reader.hpp"
