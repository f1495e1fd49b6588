// The fixed benchmark set benchmarks/drug_like.smi (drug-sized molecules, 20-40 heavy atoms), read once.
#pragma once

#include <fstream>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

#ifndef REPEL_SOURCE_DIR
#error "REPEL_SOURCE_DIR is set by benchmarks/CMakeLists.txt"
#endif

namespace repel::bench {

struct DrugRecord {
    std::string smiles;
    std::string name;
};

// The records of benchmarks/drug_like.smi in file order (comment and blank lines skipped).
inline const std::vector<DrugRecord>& drug_set() {
    static const std::vector<DrugRecord> records = [] {
        const std::string path = std::string(REPEL_SOURCE_DIR) + "/benchmarks/drug_like.smi";
        std::ifstream in(path);
        if (!in) throw std::runtime_error("cannot read " + path);
        std::vector<DrugRecord> out;
        std::string line;
        while (std::getline(in, line)) {
            if (line.empty() || line[0] == '#') continue;
            std::istringstream fields(line);
            DrugRecord r;
            fields >> r.smiles >> r.name;
            if (!r.smiles.empty()) out.push_back(r);
        }
        return out;
    }();
    return records;
}

}  // namespace repel::bench
