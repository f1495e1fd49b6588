// What the front door's result types hold beyond their public fields, and the conversions the front end shares with
// it. Private to the library and its own front end (app/): users see <repel/repel.hpp> only.
#pragma once

#include <repel/repel.hpp>

#include <nlohmann/json.hpp>

#include "assemble/build.hpp"
#include "check/audit.hpp"
#include "domains/domains.hpp"
#include "input/species.hpp"
#include "input/structure_reader.hpp"

namespace repel {

struct ShapeDetail {
    MoleculeDomains domains;
};

struct CheckDetail {
    Audit audit;
};

// The library's own options for the front door's settings.
BuildOptions build_options(const BuildSettings& settings);
AuditOptions audit_options(const CheckSettings& settings);
Notation notation_of(TextNotation notation);

// The analysis as the JSON object of `repel shape --json` (the front end puts a batch's in one array).
nlohmann::json shape_json_object(const Shape& shape, const std::string& title);

// One checked structure as the JSON object of `repel check --json` (the front end puts several in one document).
nlohmann::json check_json(const CheckResult& result);

}  // namespace repel
