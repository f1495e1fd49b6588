// Pictures of a structure: a standalone SVG drawing (shaded spheres, sticks with their bond orders, depth cueing,
// labels, electron-domain lobes for `repel shape`, marked atoms for `repel check`), and the pieces the check
// report's page shares with it (the element colours, the principal-axes view).
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "domains/domains.hpp"
#include "graph/molecule.hpp"

namespace repel {

// This project's element colour (own design, see the table in picture.cpp) as "#rrggbb".
std::string element_colour(int z);
// The radius (Angstrom) an atom's ball is drawn with, from its single-bond covalent radius.
double picture_ball_radius(int z);

// A lone pair or single electron of a centre, as a lobe along its domain direction.
struct Lobe {
    int centre = -1;                                  // 0-based atom
    Eigen::Vector3d direction = Eigen::Vector3d::UnitZ();  // unit vector, in the structure's own frame
    bool single_electron = false;                     // false: a lone pair
};

struct PictureOptions {
    bool hydrogens = true;              // false: hydrogen atoms and their bonds are left out
    std::string title;                  // one line above the drawing (empty: none)
    std::vector<Lobe> lobes;            // drawn from their centres (domain_lobes)
    std::vector<std::string> captions;  // lines below the drawing (centre_captions)
    std::vector<int> labelled;          // 0-based atoms labelled with symbol and number (the centres of `shape`)
    std::vector<int> marked;            // 0-based atoms ringed and numbered (the atoms of `check` findings)
    bool legend = true;
    int width = 720;                    // pixels; the height follows the molecule
    double tilt_degrees = 0;            // turns the principal view by this about its x axis, then by 0.7 of it about
                                        // its y axis (shape pictures: 32), so that nothing points at the viewer
};

// The view of the drawing: rows of `rotation` are the drawing's x axis (largest spread of the atoms), y axis (second)
// and z axis (toward the viewer, smallest spread): the principal axes of the atom positions, a right-handed frame.
// Signs are fixed by the third moment along each axis, so the same structure always gives the same view.
struct View {
    Eigen::Matrix3d rotation = Eigen::Matrix3d::Identity();
    Eigen::Vector3d centre = Eigen::Vector3d::Zero();
};
View principal_view(const std::vector<Eigen::Vector3d>& positions);

// The whole SVG document. Every atom drawn is a <circle class="atom" data-atom="N" data-element="X">, every lobe an
// <ellipse class="lobe ..." data-centre="N" data-direction="x y z"> (N 1-based, the direction in the structure's
// frame), every bond half a <line class="bond" data-bond="N">; tests read these instead of pixels. Throws
// std::runtime_error (like the writers) for a non-finite coordinate.
std::string picture_svg(const Structure& structure, const PictureOptions& options = {});

// The lone pairs and single electrons of every centre (atoms with two or more bonded neighbours, and lone atoms: the
// rows of `repel shape`) in the frame of `structure`: each centre's domain directions are in the centre's own frame,
// so they are turned by the rotation (Kabsch) that takes its bonded domain directions onto the actual bond vectors.
// `domains` must be the analysis of structure.molecule (same atoms, same neighbour order).
std::vector<Lobe> domain_lobes(const Structure& structure, const MoleculeDomains& domains);

// One caption line per group of alike centres ("C1-C6: AX4, tetrahedral; 109.5 deg"), at most `limit` lines (then a
// line saying how many more), and the centres themselves (0-based) for PictureOptions::labelled.
std::vector<std::string> centre_captions(const Molecule& molecule, const MoleculeDomains& domains,
                                         std::vector<int>* centres = nullptr, size_t limit = 12);

// The picture of `repel shape --picture`: the built structure with every centre's lobes, its centres labelled and
// captioned (AXE class, shape, predicted angles).
std::string shape_picture_svg(const Structure& structure, const MoleculeDomains& domains, const std::string& title,
                              bool hydrogens = true);

}  // namespace repel
