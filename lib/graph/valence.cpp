#include "graph/valence.hpp"

#include <cstdlib>

#include "core/element.hpp"

namespace repel {

int charged_organic_valence(const OrganicElement& e, int charge, int sum) {
    if (charge == 0) return e.lowest_valence_at_least(sum);
    if (e.z == 6) return 4 - std::abs(charge);
    if (e.z == 5) return 3 - charge;
    return e.valences[0] + charge;
}

int isoelectronic_valences(int z, int charge, std::array<int, 4>& out) {
    const ElementData& e = element(z);
    const int electrons = e.valence_electrons - charge;
    const bool second_period = e.period <= 2;
    switch (electrons) {
    case 3: out = {3}; return 1;
    case 4: out = {4}; return 1;
    case 5: out = {3, 5}; return 2;
    case 6:
        if (second_period) { out = {2}; return 1; }
        out = {2, 4, 6};
        return 3;
    case 7:
        if (second_period) { out = {1}; return 1; }
        out = {1, 3, 5, 7};
        return 4;
    default: return 0;
    }
}

std::vector<ValenceState> valence_states(int z) {
    const ElementData& e = element(z);
    if (z == 1) return {{1, 0}, {0, 1}, {0, -1}};
    if (is_transition_metal(z)) return {};
    const int g = e.group;
    const bool heavy = e.period >= 3;
    switch (g) {
        case 1: return {{1, 0}, {0, 1}};
        case 2: return {{2, 0}, {0, 2}};
        case 13: return {{3, 0}, {4, -1}};
        case 14:
            if (z == 6) return {{4, 0}, {3, 1}, {3, -1}};
            return {{4, 0}, {2, 0}, {3, -1}, {6, -2}, {5, -1}};
        case 15:
            if (!heavy) return {{3, 0}, {4, 1}, {2, -1}};
            return {{3, 0}, {5, 0}, {4, 1}, {2, -1}, {6, -1}};
        case 16:
            if (!heavy) return {{2, 0}, {1, -1}, {3, 1}};
            return {{2, 0}, {4, 0}, {6, 0}, {1, -1}, {3, 1}, {5, -1}};
        case 17:
            if (!heavy) return {{1, 0}, {0, -1}};
            return {{1, 0}, {3, 0}, {5, 0}, {7, 0}, {0, -1}, {2, -1}, {4, -1}, {2, 1}};
        case 18:
            if (z <= 10) return {{0, 0}};
            return {{0, 0}, {2, 0}, {4, 0}, {6, 0}, {8, 0}};
        default: return {};
    }
}

std::vector<ValenceState> donor_valence_states(int z) {
    std::vector<ValenceState> s = valence_states(z);
    const int g = element(z).group;
    if (g == 14 || g == 15 || g == 16) {
        const int octet = 18 - g;  // neutral octet valence: N 3, O 2
        for (int k = 2; k <= octet; ++k) s.push_back({octet - k, -k});
    }
    return s;
}

}  // namespace repel
