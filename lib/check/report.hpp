// The audit as text for a person, or as JSON for a pipeline.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "check/audit.hpp"

namespace repel {

std::string audit_text(const Audit& audit, int index);
nlohmann::json audit_json(const Audit& audit);

}  // namespace repel
