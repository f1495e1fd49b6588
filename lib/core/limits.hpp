// Limits that protect the machine from hostile or broken input: a largest molecule, and a time limit per molecule.
// A limit only ever fails a molecule (with a LimitError saying which limit and how to raise it); it never changes
// the structure built for a molecule within the limits, so output stays deterministic.
#pragma once

#include <string>

#include "core/error.hpp"

namespace repel {

// The most atoms a reader accepts in one molecule or structure (as written, before implicit hydrogens are added):
// ten times a 100,000-atom molecule, far below what would exhaust memory (about 1 kB per atom while building).
constexpr int kMaxAtoms = 1'000'000;

// Time a build may take per molecule by default (seconds of wall-clock time). Drug-sized molecules take
// milliseconds and a 100,000-atom chain (300,002 atoms with hydrogens) about 4 s on the shared 2-core development
// machine (measured); only a pathological input reaches it.
constexpr double kDefaultTimeLimit = 60;

// A limit was exceeded. An InputError (the input is what cannot be handled), so callers that report bad records
// report it alike.
class LimitError : public InputError {
public:
    using InputError::InputError;
};

// While alive, gives this thread a deadline `seconds` from now (0 or less: none); restores the previous one on
// destruction, so nested scopes work.
class ScopedDeadline {
public:
    explicit ScopedDeadline(double seconds);
    ~ScopedDeadline();
    ScopedDeadline(const ScopedDeadline&) = delete;
    ScopedDeadline& operator=(const ScopedDeadline&) = delete;

private:
    double previous_end_;
    double previous_limit_;
};

// True when this thread has a deadline and it has passed. Cheap (one clock read); for loops that cannot throw
// (callbacks from C code), which stop early and call check_deadline() after.
bool deadline_passed();

// Throws LimitError "gave up after N s (the time limit per molecule) while <stage>" when deadline_passed().
void check_deadline(const char* stage);

}  // namespace repel
