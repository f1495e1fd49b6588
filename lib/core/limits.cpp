#include "core/limits.hpp"

#include <fmt/format.h>

#include <chrono>

namespace repel {
namespace {

// Seconds on the monotonic clock; deadlines are kept per thread so that threads building different molecules each
// have their own.
double now() {
    return std::chrono::duration<double>(std::chrono::steady_clock::now().time_since_epoch()).count();
}

thread_local double deadline_end = 0;    // 0: no deadline
thread_local double deadline_limit = 0;  // the limit that set it, for the message

}  // namespace

ScopedDeadline::ScopedDeadline(double seconds) : previous_end_(deadline_end), previous_limit_(deadline_limit) {
    if (seconds > 0) {
        deadline_end = now() + seconds;
        deadline_limit = seconds;
    } else {
        deadline_end = 0;
        deadline_limit = 0;
    }
}

ScopedDeadline::~ScopedDeadline() {
    deadline_end = previous_end_;
    deadline_limit = previous_limit_;
}

bool deadline_passed() { return deadline_end > 0 && now() > deadline_end; }

void check_deadline(const char* stage) {
    if (deadline_passed())
        throw LimitError(fmt::format("gave up after {:g} s (the time limit per molecule; repel build --time-limit "
                                     "raises it) while {}",
                                     deadline_limit, stage));
}

}  // namespace repel
