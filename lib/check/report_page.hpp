// The audit of many structures as one self-contained HTML page (`repel check --report FILE.html`): a summary table
// (sortable, filterable), and per structure, drawn only when opened, its picture with the flagged atoms marked, its
// findings, and a rotatable 3D view on a canvas. No network, no external script or font.
#pragma once

#include <set>
#include <string>
#include <vector>

#include "check/audit.hpp"

namespace repel {

class ReportPage {
public:
    explicit ReportPage(std::string heading) : heading_(std::move(heading)) {}
    // One audited structure; `number` is its 1-based place in the run, `file` the file it came from.
    void add(const Audit& audit, int number, const std::string& file);
    // A structure that could not be audited (a limit, an unsupported element): a row saying why.
    void add_failure(int number, const std::string& file, long line, const std::string& why);
    // The whole page. Deterministic: the same audits give the same bytes.
    std::string html() const;
    size_t size() const { return rows_.size(); }

private:
    std::string heading_;
    std::vector<std::string> rows_;  // <tr> elements of the summary table
    std::vector<std::string> data_;  // one JSON document per structure (geometry, findings, picture)
    std::set<int> elements_;         // atomic numbers seen, for the palette the script uses
};

}  // namespace repel
