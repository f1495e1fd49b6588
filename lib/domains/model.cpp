#include "domains/model.hpp"

#include <algorithm>
#include <cmath>

#include "core/element.hpp"

namespace repel {

const DomainModel& domain_model() {
    // Fitted by least squares to the 14 training angles of tests/model_table.hpp (sum of squared residuals
    // 168.3 deg^2; residuals per species in README.md). Bonding domains come out steep (exponent ~9: ligands pack
    // like hard spheres) and lone pairs soft (~1.6) on a small inner sphere; REPEL_REFIT=1 test_model_fit re-fits.
    static const DomainModel model{
        .bond_exponent = 9.1092,
        .lone_pair_exponent = 1.6103,
        .lone_pair_weight = 0.1156,
        .lone_pair_radius = 0.2959,
        .single_electron_weight = 0.0271,
        .single_electron_radius = 0.1532,
        .multiple_bond_weight = 2.4694,
        .electronegativity_slope = 0.2093,
        .period_slope = 0.6436,
    };
    return model;
}

SphereDomain bonding_domain(const DomainModel& model, int centre_z, int ligand_z, int order) {
    const ElementData& c = element(centre_z);
    const ElementData& l = element(ligand_z);
    // Bent's rule: a ligand more electronegative than the centre draws the bonding pair out, so its domain is smaller.
    const double delta = (c.electronegativity > 0 && l.electronegativity > 0) ? l.electronegativity - c.electronegativity : 0.0;
    double w = std::exp(-model.electronegativity_slope * delta);
    // Larger centres hold their bonding pairs further out, where they take less angular room than the lone pairs.
    w *= std::exp(-model.period_slope * std::max(0, c.period - 2));
    w *= std::pow(1.0 + model.multiple_bond_weight, std::clamp(order, 1, 3) - 1);
    return {w, 1.0, model.bond_exponent};
}

SphereDomain lone_pair_domain(const DomainModel& model, int) {
    return {model.lone_pair_weight, model.lone_pair_radius, model.lone_pair_exponent};
}

SphereDomain single_electron_domain(const DomainModel& model, int) {
    return {model.single_electron_weight, model.single_electron_radius, model.lone_pair_exponent};
}

}  // namespace repel
