#include "domains/model.hpp"

#include <algorithm>
#include <cmath>

#include "core/element.hpp"

namespace repel {

const DomainModel& domain_model() {
    // Fitted by least squares to the 19 training angles of tests/model_table.hpp, with the sites of every domain
    // fixed by the arrangement stage (arrangement_domain below); sum of squared residuals 192.9 deg^2, residuals per
    // species in README.md. Bonding domains come out steeper (exponent 4.4) than lone pairs (0.77), which sit on a
    // small inner sphere (radius 0.26). REPEL_REFIT=1 test_model_fit re-runs the fit.
    static const DomainModel model{
        .bond_exponent = 4.4483,
        .lone_pair_exponent = 0.7716,
        .lone_pair_weight = 0.7066,
        .lone_pair_radius = 0.2565,
        .single_electron_weight = 0.3021,
        .single_electron_radius = 0.1655,
        .multiple_bond_weight = 1.1950,
        .electronegativity_slope = 0.1465,
        .period_slope = 0.3751,
    };
    return model;
}

SphereDomain bonding_domain(const DomainModel& model, int centre_z, int ligand_z, double order) {
    const ElementData& c = element(centre_z);
    const ElementData& l = element(ligand_z);
    // Bent's rule: a ligand more electronegative than the centre draws the bonding pair out, so its domain is smaller.
    const double delta = (c.electronegativity > 0 && l.electronegativity > 0) ? l.electronegativity - c.electronegativity : 0.0;
    double w = std::exp(-model.electronegativity_slope * delta);
    // Larger centres hold their bonding pairs further out, where they take less angular room than the lone pairs.
    w *= std::exp(-model.period_slope * std::max(0, c.period - 2));
    w *= std::pow(1.0 + model.multiple_bond_weight, std::clamp(order, 1.0, 3.0) - 1.0);
    return {w, 1.0, model.bond_exponent};
}

SphereDomain lone_pair_domain(const DomainModel& model, int) {
    return {model.lone_pair_weight, model.lone_pair_radius, model.lone_pair_exponent};
}

SphereDomain single_electron_domain(const DomainModel& model, int) {
    return {model.single_electron_weight, model.single_electron_radius, model.lone_pair_exponent};
}

SphereDomain arrangement_domain(DomainKind kind) {
    constexpr double kExponent = 2.0;
    constexpr double kLonePairRadius = 0.7;
    constexpr double kSingleElectronRadius = 0.85;  // between a lone pair and a bond: a half-filled domain
    switch (kind) {
        case DomainKind::bond: return {1.0, 1.0, kExponent};
        case DomainKind::lone_pair: return {1.0, kLonePairRadius, kExponent};
        case DomainKind::single_electron: return {0.5, kSingleElectronRadius, kExponent};
    }
    return {1.0, 1.0, kExponent};
}

}  // namespace repel
