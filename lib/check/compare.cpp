#include "check/compare.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <map>
#include <optional>

#include "graph/stereo.hpp"
#include "core/element.hpp"
#include "domains/metal.hpp"
#include "graph/polyhedral_stereo.hpp"

namespace repel {
namespace {

// Classes of atoms that a matching must respect: element and degree, refined a few rounds by the sorted classes of
// the neighbours (the same rounds on both graphs, so equal classes mean equal surroundings up to that depth).
std::vector<long> classes(const Molecule& m, int rounds) {
    const int n = m.atom_count();
    std::vector<long> c(static_cast<size_t>(n));
    for (int i = 0; i < n; ++i) c[static_cast<size_t>(i)] = m.atoms[static_cast<size_t>(i)].z * 16 + m.degree(i);
    for (int r = 0; r < rounds; ++r) {
        std::vector<long> next(static_cast<size_t>(n));
        for (int i = 0; i < n; ++i) {
            std::vector<long> nb;
            for (const Neighbor& x : m.neighbors(i)) nb.push_back(c[static_cast<size_t>(x.atom)]);
            std::sort(nb.begin(), nb.end());
            // Unsigned arithmetic: the hash wraps around by design (signed overflow would be undefined).
            std::uint64_t h = static_cast<std::uint64_t>(c[static_cast<size_t>(i)]) * 1000003ULL;
            for (long v : nb) h = (h ^ static_cast<std::uint64_t>(v)) * 1099511628211ULL;
            next[static_cast<size_t>(i)] = static_cast<long>(h);
        }
        c.swap(next);
    }
    return c;
}

class Matcher {
public:
    Matcher(const Molecule& ref, const Molecule& s, std::vector<long> cr, std::vector<long> cs)
        : ref_(ref), s_(s), cr_(std::move(cr)), cs_(std::move(cs)) {
        map_.assign(ref.atoms.size(), -1);
        used_.assign(s.atoms.size(), 0);
        // Reference atoms in breadth-first order, so that each (after the first of a component) has a mapped
        // neighbour that narrows its candidates.
        std::vector<char> seen(ref.atoms.size(), 0);
        for (int start = 0; start < ref.atom_count(); ++start) {
            if (seen[static_cast<size_t>(start)]) continue;
            seen[static_cast<size_t>(start)] = 1;
            size_t head = order_.size();
            order_.push_back(start);
            while (head < order_.size()) {
                int v = order_[head++];
                for (const Neighbor& nb : ref.neighbors(v))
                    if (!seen[static_cast<size_t>(nb.atom)]) {
                        seen[static_cast<size_t>(nb.atom)] = 1;
                        order_.push_back(nb.atom);
                    }
            }
        }
    }

    // Calls visit(map) for each complete matching until it returns true or the step budget is spent. Depth-first
    // with an explicit stack (one frame per mapped reference atom), so the depth of the search never becomes the
    // depth of the call stack: a reference of 100,000 atoms is no deeper for the machine than one of ten.
    template <class Visit>
    bool run(Visit visit) {
        if (++steps_ > kSteps) return true;
        if (order_.empty()) return visit(map_);
        std::vector<Frame> stack;
        stack.push_back(frame(0));
        while (!stack.empty()) {
            const size_t k = stack.size() - 1;
            const int r = order_[k];
            bool descended = false;
            {
                Frame& f = stack.back();
                if (f.assigned >= 0) {  // back from the level below: undo this level's choice, try the next
                    map_[static_cast<size_t>(r)] = -1;
                    used_[static_cast<size_t>(f.assigned)] = 0;
                    f.assigned = -1;
                }
                while (f.next < f.candidates.size()) {
                    const int c = f.candidates[f.next++];
                    if (!acceptable(r, c)) continue;
                    map_[static_cast<size_t>(r)] = c;
                    used_[static_cast<size_t>(c)] = 1;
                    f.assigned = c;
                    if (++steps_ > kSteps) return true;
                    if (k + 1 == order_.size()) {
                        if (visit(map_)) return true;
                        map_[static_cast<size_t>(r)] = -1;
                        used_[static_cast<size_t>(c)] = 0;
                        f.assigned = -1;
                        continue;
                    }
                    descended = true;
                    break;
                }
            }
            if (descended) stack.push_back(frame(k + 1));  // f is not used past here (push_back may move it)
            else stack.pop_back();
        }
        return false;
    }
    bool exhausted() const { return steps_ > kSteps; }

private:
    struct Frame {
        std::vector<int> candidates;
        size_t next = 0;
        int assigned = -1;  // the image chosen at this level, -1 for none
    };

    // The candidates for reference atom order_[k]: neighbours of the image of a mapped neighbour, else every atom.
    Frame frame(size_t k) const {
        const int r = order_[k];
        int anchor = -1;
        for (const Neighbor& nb : ref_.neighbors(r))
            if (map_[static_cast<size_t>(nb.atom)] >= 0) {
                anchor = map_[static_cast<size_t>(nb.atom)];
                break;
            }
        Frame f;
        if (anchor >= 0)
            for (const Neighbor& nb : s_.neighbors(anchor)) f.candidates.push_back(nb.atom);
        else
            for (int i = 0; i < s_.atom_count(); ++i) f.candidates.push_back(i);
        return f;
    }

    bool acceptable(int r, int c) const {
        if (used_[static_cast<size_t>(c)] || cs_[static_cast<size_t>(c)] != cr_[static_cast<size_t>(r)]) return false;
        for (const Neighbor& nb : ref_.neighbors(r)) {
            const int m = map_[static_cast<size_t>(nb.atom)];
            if (m >= 0 && s_.bond_between(c, m) < 0) return false;
        }
        return true;
    }

    static constexpr long kSteps = 2'000'000;  // search steps before giving up (highly symmetric large structures)
    const Molecule& ref_;
    const Molecule& s_;
    std::vector<long> cr_, cs_;
    std::vector<int> map_, used_, order_;
    long steps_ = 0;
};

// Hill order (common practice): C, then H, then the other elements alphabetically; without carbon, all alphabetically.
std::string formula(const std::map<int, int>& count) {
    std::vector<std::pair<std::string, int>> parts;
    const bool carbon = count.count(6) && count.at(6) > 0;
    for (auto [z, n] : count) {
        if (n == 0) continue;
        std::string key(element(z).symbol);
        if (carbon && z == 6) key = std::string("\x01") + key;
        if (carbon && z == 1) key = std::string("\x02") + key;
        parts.emplace_back(key, n);
    }
    std::sort(parts.begin(), parts.end());
    std::string out;
    for (auto& [key, n] : parts) {
        const std::string symbol = key[0] < ' ' ? key.substr(1) : key;
        out += symbol + (n == 1 ? "" : std::to_string(n));
    }
    return out;
}

// Centres with an @SP/@TB/@OH mark: which ligands are cis and which trans. The ideal angle of every pair of
// neighbours (90, 120 or 180 degrees) against the measured one; more than 45 degrees off (halfway from cis to trans
// in an octahedron or a square) is the other isomer.
struct Polyhedral {
    int centre;
    std::vector<int> neighbours;
    std::vector<double> angles;  // per pair (i < j), in order
};
constexpr double kPolyhedralTolerance = 45.0;

std::vector<Polyhedral> polyhedral_marks(const Molecule& ref) {
    std::vector<Polyhedral> polyhedral;
    for (int i = 0; i < ref.atom_count(); ++i) {
        if (polyhedral_neighbor_count(ref.atoms[static_cast<size_t>(i)].chiral_class) == 0) continue;
        const auto dirs = marked_directions(ref, i);
        if (!dirs) continue;
        Polyhedral p{i, {}, {}};
        for (const Neighbor& nb : ref.neighbors(i)) p.neighbours.push_back(nb.atom);
        for (size_t a = 0; a < dirs->size(); ++a)
            for (size_t b = a + 1; b < dirs->size(); ++b)
                p.angles.push_back(std::acos(std::clamp((*dirs)[a].dot((*dirs)[b]), -1.0, 1.0)) * 180.0 / M_PI);
        polyhedral.push_back(std::move(p));
    }
    return polyhedral;
}

// A different formula or bond count: the one finding, else nothing.
std::optional<Finding> composition_mismatch(const Molecule& s, const Molecule& ref) {
    std::map<int, int> cr, cs;
    for (const Atom& a : ref.atoms) ++cr[a.z];
    for (const Atom& a : s.atoms) ++cs[a.z];
    if (cr != cs) {
        std::string diff;
        std::map<int, int> all = cr;
        for (const auto& entry : cs) all.emplace(entry.first, 0);
        for (auto [z, n] : all) {
            const int d = cs[z] - cr[z];
            if (d != 0) diff += fmt::format(" {} {} {}", d > 0 ? "extra" : "missing", std::abs(d), element(z).symbol);
        }
        return Finding{"formula", {},
                       fmt::format("the structure is {}, the reference {}:{}", formula(cs), formula(cr), diff),
                       std::nullopt, std::nullopt, "", Severity::error, 300};
    }
    if (ref.bond_count() != s.bond_count())
        return Finding{"connectivity", {},
                       fmt::format("the structure has {} bonds, the reference {}", s.bond_count(), ref.bond_count()),
                       s.bond_count(), ref.bond_count(), "", Severity::error, 300};
    return std::nullopt;
}

// The reference's stereo (marks of stereocentres and allenes, polyhedral marks, double bonds) judged on the
// structure through one matching of the reference's atoms onto the structure's.
class StereoJudge {
public:
    StereoJudge(const Molecule& s, const std::vector<Eigen::Vector3d>& pos, const Molecule& ref) : s_(s), pos_(pos) {
        std::vector<std::string> warnings;
        chiral_ = chiral_targets(ref, warnings);
        doubles_ = double_bond_targets(ref);
        polyhedral_ = polyhedral_marks(ref);
    }

    // How many of them the matching `map` (reference atom -> structure atom) gets wrong; each as a finding too when
    // `findings` is not null.
    size_t wrong(const std::vector<int>& map, std::vector<Finding>* findings) const {
        // In this order (the findings' order): operands of + are evaluated in no fixed order.
        size_t count = wrong_centres(map, findings);
        count += wrong_polyhedra(map, findings);
        count += wrong_double_bonds(map, findings);
        return count;
    }

private:
    size_t wrong_centres(const std::vector<int>& map, std::vector<Finding>* findings) const {
        size_t count = 0;
        for (const ChiralTarget& t : chiral_) {
            ChiralTarget u{map[static_cast<size_t>(t.centre)], map[static_cast<size_t>(t.n1)],
                           map[static_cast<size_t>(t.n2)], map[static_cast<size_t>(t.n3)], t.sign};
            if (chirality_met(u, pos_)) continue;
            ++count;
            if (findings)
                findings->push_back({"stereocentre", {u.centre + 1},
                                     fmt::format("{}{} has the opposite handedness to the reference's (a mirrored "
                                                 "stereocentre)",
                                                 element(s_.atoms[static_cast<size_t>(u.centre)].z).symbol, u.centre + 1),
                                     std::nullopt, std::nullopt, "", Severity::error, 80});
        }
        return count;
    }

    size_t wrong_polyhedra(const std::vector<int>& map, std::vector<Finding>* findings) const {
        size_t count = 0;
        for (const Polyhedral& p : polyhedral_) {
            const int c = map[static_cast<size_t>(p.centre)];
            size_t k = 0;
            int wa = -1, wb = -1;
            double measured = 0, ideal = 0;
            for (size_t a = 0; a < p.neighbours.size(); ++a)
                for (size_t b = a + 1; b < p.neighbours.size(); ++b, ++k) {
                    const int x = map[static_cast<size_t>(p.neighbours[a])], y = map[static_cast<size_t>(p.neighbours[b])];
                    const Eigen::Vector3d u = pos_[static_cast<size_t>(x)] - pos_[static_cast<size_t>(c)];
                    const Eigen::Vector3d v = pos_[static_cast<size_t>(y)] - pos_[static_cast<size_t>(c)];
                    const double angle = std::acos(std::clamp(u.normalized().dot(v.normalized()), -1.0, 1.0)) * 180.0 / M_PI;
                    if (wa < 0 && std::fabs(angle - p.angles[k]) > kPolyhedralTolerance) {
                        wa = x, wb = y, measured = angle, ideal = p.angles[k];
                    }
                }
            if (wa < 0) continue;
            ++count;
            if (findings) {
                auto name = [&](int i) { return fmt::format("{}{}", element(s_.atoms[static_cast<size_t>(i)].z).symbol, i + 1); };
                findings->push_back({"stereocentre", {c + 1, wa + 1, wb + 1},
                                     fmt::format("{}: the ligands are arranged otherwise than the reference's mark says "
                                                 "(another isomer): {}-{}-{} is {:.0f} degrees, {:.0f} in the reference",
                                                 name(c), name(wa), name(c), name(wb), measured, ideal),
                                     measured, ideal, "degrees", Severity::error, 80});
            }
        }
        return count;
    }

    size_t wrong_double_bonds(const std::vector<int>& map, std::vector<Finding>* findings) const {
        size_t count = 0;
        for (const DoubleBondTarget& t : doubles_) {
            DoubleBondTarget u{map[static_cast<size_t>(t.a)], map[static_cast<size_t>(t.b)], map[static_cast<size_t>(t.c)],
                               map[static_cast<size_t>(t.d)], t.cis};
            if (double_bond_met(u, pos_)) continue;
            ++count;
            if (findings)
                findings->push_back({"double bond", {u.b + 1, u.c + 1},
                                     fmt::format("the double bond {}{}={}{} is {} in the structure, {} in the reference",
                                                 element(s_.atoms[static_cast<size_t>(u.b)].z).symbol, u.b + 1,
                                                 element(s_.atoms[static_cast<size_t>(u.c)].z).symbol, u.c + 1,
                                                 t.cis ? "trans" : "cis", t.cis ? "cis" : "trans"),
                                     std::nullopt, std::nullopt, "", Severity::error, 80});
        }
        return count;
    }

    const Molecule& s_;
    const std::vector<Eigen::Vector3d>& pos_;
    std::vector<ChiralTarget> chiral_;
    std::vector<DoubleBondTarget> doubles_;
    std::vector<Polyhedral> polyhedral_;
};

}  // namespace

std::vector<Finding> compare_with_reference(const Molecule& s, const std::vector<Eigen::Vector3d>& pos,
                                            Molecule ref) {
    std::vector<Finding> out;
    ref.make_hydrogens_explicit();
    {
        // A metallocene written as separate ions is the sandwich the structure has (as the build reads it).
        std::vector<std::string> notes;
        join_separated_sandwich_ions(ref, notes);
    }
    if (auto mismatch = composition_mismatch(s, ref)) {
        out.push_back(std::move(*mismatch));
        return out;
    }
    const StereoJudge judge(s, pos, ref);
    Matcher matcher(ref, s, classes(ref, 3), classes(s, 3));
    std::vector<int> best;
    size_t best_wrong = static_cast<size_t>(-1);
    long matchings = 0;
    matcher.run([&](const std::vector<int>& map) {
        ++matchings;
        const size_t w = judge.wrong(map, nullptr);
        if (w < best_wrong) {
            best_wrong = w;
            best = map;
        }
        return w == 0 || matchings >= 1000;  // stop at a perfect one, or after enough equivalent matchings
    });
    if (best.empty()) {
        out.push_back({"connectivity", {},
                       matcher.exhausted()
                           ? "the structure could not be matched to the reference within the search budget"
                           : "the structure's bonds do not match the reference's (same atoms, different connections)",
                       std::nullopt, std::nullopt, "", Severity::error, 300});
        return out;
    }
    judge.wrong(best, &out);
    return out;
}

}  // namespace repel
