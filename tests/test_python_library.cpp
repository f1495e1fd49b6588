// The Python module's C++ side (python/library.cpp), linked here without Python so that the unit tests, and the
// sanitizer build that runs them (the module itself cannot load into an unsanitized python), cover it: build_many's
// worker threads, check with fix, the checks on atoms given directly.
#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "library.hpp"

namespace repel::python {
namespace {

std::vector<BuildRequest> requests(const std::vector<std::string>& texts) {
    std::vector<BuildRequest> out;
    for (const std::string& t : texts) out.push_back({.text = t});
    return out;
}

TEST(PythonLibrary, BuildManyKeepsOrderAndFailuresForAnyThreadCount) {
    std::vector<std::string> texts;
    for (int k = 0; k < 20; ++k)
        for (const char* t : {"CC(=O)Oc1ccccc1C(=O)O", "F[Cl](F)F", "CC(", "NO2", "[Ce]", ""}) texts.emplace_back(t);
    const std::vector<Outcome> one = build_many(requests(texts), 1);
    ASSERT_EQ(one.size(), texts.size());
    EXPECT_TRUE(one[0].built.has_value());
    EXPECT_FALSE(one[2].built.has_value());
    EXPECT_EQ(one[2].failure.error, "InputError");
    EXPECT_GT(one[2].failure.column, 0);
    EXPECT_EQ(one[4].failure.error, "UnsupportedError");
    EXPECT_EQ(one[5].failure.error, "InputError");  // the empty text
    for (unsigned threads : {2U, 3U, 8U}) {
        const std::vector<Outcome> many = build_many(requests(texts), threads);
        ASSERT_EQ(many.size(), one.size());
        for (size_t k = 0; k < one.size(); ++k) {
            ASSERT_EQ(many[k].built.has_value(), one[k].built.has_value()) << k;
            if (one[k].built)
                EXPECT_EQ(write_text(*many[k].built, "sdf"), write_text(*one[k].built, "sdf")) << k;
            else
                EXPECT_EQ(many[k].failure.message, one[k].failure.message) << k;
        }
    }
    EXPECT_TRUE(build_many({}, 4).empty());
}

TEST(PythonLibrary, BuildManyNamesALimitError) {
    const std::vector<Outcome> out = build_many(requests({std::string(1'000'001, 'C')}), 2);
    ASSERT_EQ(out.size(), 1u);
    EXPECT_EQ(out[0].failure.error, "LimitError");  // the reader's atom limit (core/limits.hpp)
}

TEST(PythonLibrary, CheckAtomsRefusesBadCoordinatesAndElements) {
    const std::vector<int> water = {8, 1, 1};
    std::vector<double> p = {0, 0, 0, 0.9572, 0, 0, -0.24, 0.9266, 0};
    EXPECT_TRUE(check_atoms(water, p, "water", {}).error.empty());
    for (double bad : {std::nan(""), std::numeric_limits<double>::infinity(), 2e7}) {
        std::vector<double> q = p;
        q[4] = bad;
        EXPECT_THROW(check_atoms(water, q, "water", {}), InputError);
    }
    EXPECT_THROW(check_atoms({8, 0, 1}, p, "water", {}), InputError);
    EXPECT_THROW(check_atoms(water, {0, 0, 0}, "water", {}), InputError);
    EXPECT_THROW(check_atoms(water, p, "water", {.smiles = "C(C"}), InputError);
}

TEST(PythonLibrary, CheckWithFixGivesTheCleanedStructure) {
    // ClF3 with atom 3 moved 0.3 A out along its bond: a bond-length finding, mended by the cleaning.
    const Built clf3 = build({.text = "F[Cl](F)F"});
    std::vector<double> p = clf3.positions;
    double d[3], len = 0;
    for (size_t k = 0; k < 3; ++k) {
        d[k] = p[9 + k] - p[3 + k];
        len += d[k] * d[k];
    }
    len = std::sqrt(len);
    for (size_t k = 0; k < 3; ++k) p[9 + k] += 0.3 * d[k] / len;
    const CheckResult r = check_atoms(clf3.numbers, p, "clf3", {.charge = 0, .multiplicity = 1, .fix = true});
    ASSERT_FALSE(r.findings.empty());
    EXPECT_EQ(r.findings[0].kind, "bond length");
    EXPECT_EQ(r.findings[0].atoms, (std::vector<int>{1, 3}));  // 0-based
    ASSERT_TRUE(r.fixed.has_value()) << r.fix_summary;
    EXPECT_EQ(r.fixed->numbers, clf3.numbers);
    EXPECT_TRUE(check_atoms(r.fixed->numbers, r.fixed->positions, "clf3", {.charge = 0, .multiplicity = 1})
                    .findings.empty());
}

}  // namespace
}  // namespace repel::python
