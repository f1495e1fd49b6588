// In the source tree, <repel/error.hpp> is lib/core/error.hpp (installed under this name): InputError,
// UnsupportedError.
#pragma once
#include "../../core/error.hpp"
