// Builds one species with the repel library and prints it as XYZ on standard output; on standard error, each
// centre's electron-domain class and what the audit of the built structure finds. Default species: water.
//   consumer [SMILES-or-formula]
#include <exception>
#include <iostream>
#include <repel/repel.hpp>

int main(int argc, char** argv) {
    const std::string text = argc > 1 ? argv[1] : "O";
    try {
        const repel::Structure structure = repel::build(text);  // hydrogens are made explicit inside
        std::cout << repel::write(structure, repel::WriteFormat::xyz, text);

        for (const repel::CentreShape& c : repel::shape(text).centres)
            std::cerr << "centre " << c.atom + 1 << ": " << c.axe << " " << c.shape << "\n";
        const repel::CheckResult audit = repel::check(structure);
        std::cerr << "repel " << repel::version() << ": " << audit.findings.size() << " findings\n";
    } catch (const repel::InputError& e) {
        std::cerr << "cannot build " << text << ": " << e.describe() << "\n";
        return 2;
    } catch (const std::exception& e) {
        std::cerr << "cannot build " << text << ": " << e.what() << "\n";
        return 2;
    }
    return 0;
}
