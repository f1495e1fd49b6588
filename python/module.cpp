// The Python module `repel`: a front end like app/, no chemistry. Every call into the library goes through
// library.hpp; this file turns its plain data into Python objects (numpy arrays, lists, dicts) and the library's
// exceptions into Python ones, so that no C++ exception ever reaches the interpreter untranslated.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <algorithm>
#include <cstdint>
#include <optional>
#include <string>
#include <thread>
#include <type_traits>

#include "core/error.hpp"
#include "library.hpp"

namespace py = pybind11;
using repel::python::Built;

namespace {

// The exception classes, created once with the module and kept for the life of the interpreter (never released:
// a module's types outlive every object that could raise them).
PyObject* g_input_error = nullptr;
PyObject* g_unsupported_error = nullptr;

// Raises repel.InputError with .message, .column (1-based, None when the error is not about a column) and .text.
void raise_input_error(const repel::InputError& e, const std::string& input) {
    const repel::InputError filled = e.text().empty() ? repel::InputError(e.what(), input, e.column()) : e;
    py::object cls = py::reinterpret_borrow<py::object>(g_input_error);
    py::object err = cls(filled.describe());
    err.attr("message") = py::str(e.what());
    err.attr("column") = e.column() > 0 ? py::object(py::int_(e.column())) : py::object(py::none());
    err.attr("text") = py::str(filled.text());
    PyErr_SetObject(g_input_error, err.ptr());
}

// Runs f with the GIL released (the library never touches Python objects), turning the library's input errors into
// repel.InputError with the input text for the caret; other exceptions go on to pybind11's translators below.
template <typename F>
auto call_library(const std::string& input, F&& f) -> decltype(f()) {
    try {
        py::gil_scoped_release release;
        return f();
    } catch (const repel::InputError& e) {
        raise_input_error(e, input);
        throw py::error_already_set();
    }
}

py::array_t<std::int64_t> int_matrix(const std::vector<int>& values, py::ssize_t columns) {
    const py::ssize_t rows = static_cast<py::ssize_t>(values.size()) / columns;
    py::array_t<std::int64_t> out(columns == 1 ? std::vector<py::ssize_t>{rows} : std::vector<py::ssize_t>{rows, columns});
    std::int64_t* p = out.mutable_data();
    for (size_t i = 0; i < values.size(); ++i) p[i] = values[i];
    return out;
}

py::array_t<double> positions_array(const Built& b) {
    const py::ssize_t n = static_cast<py::ssize_t>(b.numbers.size());
    py::array_t<double> out(std::vector<py::ssize_t>{n, 3});
    std::copy(b.positions.begin(), b.positions.end(), out.mutable_data());
    return out;
}

std::string fspath(const py::object& path) {
    return py::str(py::module_::import("os").attr("fspath")(path)).cast<std::string>();
}

py::dict result_dict(const repel::python::CheckResult& r) {
    py::dict d;
    d["title"] = r.title;
    d["line"] = r.line;
    d["error"] = r.error.empty() ? py::object(py::none()) : py::object(py::str(r.error));
    d["charge"] = r.charge;
    d["multiplicity"] = r.multiplicity;
    py::list findings;
    for (const repel::python::CheckFinding& f : r.findings) {
        py::dict fd;
        fd["kind"] = f.kind;
        fd["atoms"] = f.atoms;
        fd["message"] = f.message;
        fd["measured"] = f.measured ? py::object(py::float_(*f.measured)) : py::object(py::none());
        fd["expected"] = f.expected ? py::object(py::float_(*f.expected)) : py::object(py::none());
        fd["unit"] = f.unit;
        fd["severity"] = f.severity;
        findings.append(fd);
    }
    d["findings"] = findings;
    d["notes"] = r.notes;
    d["fixed"] = r.fixed ? py::cast(*r.fixed) : py::object(py::none());
    d["fix_summary"] = r.fix_summary.empty() ? py::object(py::none()) : py::object(py::str(r.fix_summary));
    return d;
}

// The exception classes and the translation of the library's exceptions.
void add_exceptions(py::module_& m) {
    g_input_error = PyErr_NewExceptionWithDoc(
        "repel.InputError",
        "Input that cannot be read or built (a SMILES that does not parse, a valence that cannot be satisfied, a\n"
        "charge or multiplicity that does not fit). A ValueError. str() is the message with the input and a caret.\n"
        "Attributes: message (the reason alone), column (1-based column in text where reading stopped, as in the\n"
        "message: text[column - 1] is that character; None when the error is not about a column), text (the input).",
        PyExc_ValueError, nullptr);
    g_unsupported_error = PyErr_NewExceptionWithDoc(
        "repel.UnsupportedError",
        "A well-formed input that repel cannot build yet (said plainly rather than answered with a wrong shape). A\n"
        "RuntimeError.",
        PyExc_RuntimeError, nullptr);
    if (g_input_error == nullptr || g_unsupported_error == nullptr) throw py::error_already_set();
    m.add_object("InputError", py::handle(g_input_error));
    m.add_object("UnsupportedError", py::handle(g_unsupported_error));
    // Errors raised outside call_library (a writer's refusal, a format name) and the library's other exceptions.
    // pybind11's own translators follow for the rest (std::exception becomes RuntimeError).
    py::register_exception_translator([](std::exception_ptr p) {
        try {
            if (p) std::rethrow_exception(p);
        } catch (const repel::InputError& e) {
            raise_input_error(e, "");
        } catch (const repel::UnsupportedError& e) {
            PyErr_SetString(g_unsupported_error, e.what());
        }
    });

}

// repel.Structure: what build() returns.
void add_structure(py::module_& m) {
    py::class_<Built>(m, "Structure",
                      "A built structure. Immutable: every array property returns a new numpy array on each access.\n"
                      "Atom indices are 0-based, in the atom order of the input (hydrogens added for implicit counts\n"
                      "follow, grouped by their heavy atom in that order).")
        .def_property_readonly(
            "elements", [](const Built& b) { return b.elements; }, "Element symbols, one per atom (list of str).")
        .def_property_readonly(
            "numbers", [](const Built& b) { return int_matrix(b.numbers, 1); },
            "Atomic numbers, one per atom (numpy int64 array, shape (n,)).")
        .def_property_readonly("positions", &positions_array,
                               "Coordinates in Angstrom (numpy float64 array, shape (n, 3)); row i is atom i.")
        .def_property_readonly(
            "bonds", [](const Built& b) { return int_matrix(b.bonds, 3); },
            "Bonds (numpy int64 array, shape (m, 3)): atom i, atom j (0-based indices into positions) and the bond\n"
            "order (1, 2, 3, or 4 for a quadruple bond; aromatic rings as one Kekule structure).")
        .def_property_readonly(
            "charge", [](const Built& b) { return b.charge; }, "Total charge (int): the sum of the formal charges.")
        .def_property_readonly(
            "multiplicity", [](const Built& b) { return b.multiplicity; },
            "Spin multiplicity 2S+1 (int): the domain analysis's, or the one asked for with build(multiplicity=).")
        .def_property_readonly(
            "warnings", [](const Built& b) { return b.warnings; },
            "Known weaknesses of this structure (list of str), as the XYZ comment and the SDF and JSON files carry them;\n"
            "atoms named there are numbered from 1, as on the command line.")
        .def_property_readonly(
            "name", [](const Built& b) { return b.name.empty() ? py::object(py::none()) : py::object(py::str(b.name)); },
            "The name given to build(), or None.")
        .def_property_readonly(
            "conformer",
            [](const Built& b) -> py::object {
                if (b.conformer_rank == 0) return py::none();
                py::dict d;
                d["rank"] = b.conformer_rank;
                d["count"] = b.conformer_count;
                d["energy"] = b.conformer_energy;
                d["relative_energy"] = b.conformer_relative_energy;
                d["rmsd_to_first"] = b.conformer_rmsd_to_first;
                return d;
            },
            "For a member of build_conformers()'s ensemble a dict: rank (1 the lowest energy), count, energy and\n"
            "relative_energy (kcal/mol), rmsd_to_first (Angstrom, heavy atoms); None for a single build.")
        .def("__len__", [](const Built& b) { return b.numbers.size(); }, "The number of atoms.")
        .def(
            "__bool__", [](const Built&) { return true; },
            "Always True (a Failure of build_many() is False), whatever the number of atoms.")
        .def("__repr__",
             [](const Built& b) {
                 return "<repel.Structure " + b.title + ": " + std::to_string(b.numbers.size()) + " atoms, charge " +
                        std::to_string(b.charge) + ", multiplicity " + std::to_string(b.multiplicity) + ">";
             })
        .def(
            "to_text", [](const Built& b, const std::string& format) { return repel::python::write_text(b, format); },
            py::arg("format"),
            "The structure as the text of a file: format 'xyz' (extended XYZ), 'sdf' (or 'mol'), 'pdb' or 'json', any\n"
            "case. Exactly what `repel build TEXT --format FORMAT` writes for the same input and options (the title is\n"
            "the name, else the input text). Raises InputError for another format name, RuntimeError when the\n"
            "structure does not fit the format (for example PDB's fixed-width fields).")
        .def(
            "write",
            [](const Built& b, const py::object& path) {
                const std::string p = fspath(path);
                const std::string text = repel::python::write_text(b, repel::python::format_for_path(p));
                // Python's own open(): an OSError with the reason when the file cannot be written.
                py::object f = py::module_::import("builtins").attr("open")(p, "wb");
                try {
                    f.attr("write")(py::bytes(text));
                } catch (...) {
                    f.attr("close")();
                    throw;
                }
                f.attr("close")();
            },
            py::arg("path"),
            "Writes to_text() to the file path (str or os.PathLike), the format from its extension: .xyz, .sdf, .mol,\n"
            ".pdb, .json (any case). Raises InputError for another extension, OSError when the file cannot be written.")
        .def(
            "to_ase",
            [](const Built& b) {
                py::module_ ase = py::module_::import("ase");  // imported here: ASE is optional
                py::object atoms = ase.attr("Atoms")(py::arg("symbols") = b.elements,
                                                     py::arg("positions") = positions_array(b));
                const std::vector<double> moments = repel::python::unpaired_per_atom(b);
                atoms.attr("set_initial_magnetic_moments")(py::array_t<double>(
                    static_cast<py::ssize_t>(moments.size()), moments.data()));
                py::dict info = atoms.attr("info");
                info["charge"] = b.charge;
                info["multiplicity"] = b.multiplicity;
                if (!b.name.empty()) info["name"] = b.name;
                return atoms;
            },
            "An ase.Atoms with the same atoms and positions (Angstrom), info['charge'], info['multiplicity'] (and\n"
            "info['name'] when named), and initial magnetic moments summing to the unpaired electrons (multiplicity - 1):\n"
            "on the atoms the domain analysis gives single electrons and on metal centres their unpaired d electrons,\n"
            "else spread evenly over the heavy atoms (for example O2's two). Imports ase when called (ImportError\n"
            "without it).");

}

// The keyword arguments build() and build_many() share.
repel::python::BuildRequest build_settings(bool refine, const std::string& notation, std::optional<int> multiplicity,
                                           std::optional<int> charge) {
    repel::python::BuildRequest request;
    request.refine = refine;
    request.notation = notation;
    request.multiplicity = multiplicity;
    request.charge = charge;
    return request;
}

// repel.Failure: a record of build_many() that could not be built, in its place in the stream.
struct Failure {
    size_t index = 0;
    std::string text;                 // the record's text (repr() of an item that was not one)
    std::optional<std::string> name;  // the record's name, if it had one
    std::string error;                // the exception's type name
    std::string message;
    int column = 0;                   // 1-based, 0: none
};

// What build_many() returns: pulls a chunk of records from the iterable (with the GIL), builds the chunk on the
// worker threads (without it), then hands out the results one by one, in input order.
class BuildMany {
public:
    BuildMany(py::iterator source, repel::python::BuildRequest settings, unsigned threads)
        : source_(std::move(source)), settings_(std::move(settings)), threads_(threads),
          chunk_(std::max<size_t>(64, 16 * static_cast<size_t>(threads))) {}

    py::object next() {
        if (busy_) throw py::value_error("build_many() iterator already executing (in another thread)");
        if (position_ == slots_.size()) fill();
        if (slots_.empty()) {
            if (pending_) {  // the iterable's own error, raised after every record it gave before it
                py::error_already_set e = std::move(*pending_);
                pending_.reset();
                throw e;
            }
            throw py::stop_iteration();
        }
        Slot& slot = slots_[position_++];
        const size_t index = first_ + position_ - 1;
        if (slot.outcome.built) return py::cast(std::move(*slot.outcome.built));
        Failure f{index, slot.request.text, slot.named ? std::optional<std::string>(slot.request.name) : std::nullopt,
                  slot.outcome.failure.error, slot.outcome.failure.message, slot.outcome.failure.column};
        return py::cast(std::move(f));
    }

private:
    struct Slot {
        repel::python::BuildRequest request;
        bool named = false;
        bool valid = false;  // false: the item was not a record (outcome.failure says why)
        repel::python::Outcome outcome;
    };

    // One item of the iterable as a record: a str, or a (text, name) pair with name a str or None.
    Slot slot_of(const py::handle& item) const {
        Slot slot;
        slot.request = settings_;
        try {
            if (py::isinstance<py::str>(item)) {
                slot.request.text = item.cast<std::string>();
            } else if (py::isinstance<py::tuple>(item) && py::len(item) == 2 &&
                       py::isinstance<py::str>(item[py::int_(0)]) &&
                       (item[py::int_(1)].is_none() || py::isinstance<py::str>(item[py::int_(1)]))) {
                slot.request.text = item[py::int_(0)].cast<std::string>();
                slot.named = !item[py::int_(1)].is_none();
                if (slot.named) slot.request.name = item[py::int_(1)].cast<std::string>();
            } else {
                slot.request.text = py::repr(item).cast<std::string>();
                slot.outcome.failure = {"TypeError",
                                        std::string("a record is a str or a (text, name) tuple, not ") +
                                            py::str(py::type::handle_of(item).attr("__name__")).cast<std::string>(),
                                        0};
                return slot;
            }
        } catch (const py::cast_error&) {  // a str with a lone surrogate, which UTF-8 cannot hold
            slot.outcome.failure = {"UnicodeEncodeError", "the text is not valid Unicode (a lone surrogate)", 0};
            return slot;
        }
        slot.valid = true;
        return slot;
    }

    // While a chunk is filled, next() may be called again on this object: by another Python thread while the GIL is
    // released, or by the iterable itself. Refused, as Python refuses a generator that is already running, rather
    // than handing out a slot not yet built.
    struct Busy {
        bool& flag;
        explicit Busy(bool& f) : flag(f) { flag = true; }
        ~Busy() { flag = false; }
        Busy(const Busy&) = delete;
        Busy& operator=(const Busy&) = delete;
    };

    void fill() {
        const Busy busy(busy_);
        first_ += slots_.size();
        slots_.clear();
        position_ = 0;
        while (!done_ && slots_.size() < chunk_) {
            PyObject* item = PyIter_Next(source_.ptr());
            if (item == nullptr) {
                if (PyErr_Occurred()) pending_.emplace();  // kept (and cleared) until this chunk is handed out
                done_ = true;
                break;
            }
            slots_.push_back(slot_of(py::reinterpret_steal<py::object>(item)));
        }
        std::vector<repel::python::BuildRequest> requests;
        for (const Slot& slot : slots_)
            if (slot.valid) requests.push_back(slot.request);
        std::vector<repel::python::Outcome> outcomes;
        {
            py::gil_scoped_release release;
            outcomes = repel::python::build_many(requests, threads_);
        }
        size_t k = 0;
        for (Slot& slot : slots_)
            if (slot.valid) slot.outcome = std::move(outcomes[k++]);
    }

    py::iterator source_;
    repel::python::BuildRequest settings_;
    unsigned threads_;
    size_t chunk_;
    std::vector<Slot> slots_;
    size_t position_ = 0;
    size_t first_ = 0;  // the index of slots_[0] in the whole stream
    bool done_ = false;
    bool busy_ = false;  // read and written with the GIL held only
    std::optional<py::error_already_set> pending_;
};

void add_build_many(py::module_& m) {
    py::class_<Failure>(m, "Failure",
                        "A record of build_many() that could not be built, yielded in its place. False in a boolean\n"
                        "context, so `[s for s in repel.build_many(...) if s]` keeps the structures.")
        .def_readonly("index", &Failure::index, "0-based position of the record in the input (int).")
        .def_readonly("text", &Failure::text, "The record's text (str; repr() of an item that was not a record).")
        .def_readonly("name", &Failure::name, "The record's name (str), or None.")
        .def_readonly("error", &Failure::error,
                      "The type name of the error: 'InputError', 'LimitError' (a size or time limit),\n"
                      "'UnsupportedError', 'TypeError' (an item that was not a str or a (text, name) tuple), ...")
        .def_readonly("message", &Failure::message, "Why, one line (atoms named from 1, as on the command line).")
        .def_property_readonly(
            "column",
            [](const Failure& f) { return f.column > 0 ? py::object(py::int_(f.column)) : py::object(py::none()); },
            "1-based column of text where reading stopped, or None.")
        .def("__bool__", [](const Failure&) { return false; })
        .def("__repr__", [](const Failure& f) {
            return "<repel.Failure " + std::to_string(f.index) + " " + py::repr(py::str(f.text)).cast<std::string>() +
                   ": " + f.error + ": " + f.message + ">";
        });

    py::class_<BuildMany>(m, "BuildMany",
                          "The iterator build_many() returns: yields a Structure or a Failure per record, in input order.")
        .def("__iter__", [](py::object self) { return self; })
        .def("__next__", &BuildMany::next);

    m.def(
        "build_many",
        [](const py::iterable& records, std::optional<int> threads, bool refine, const std::string& notation,
           std::optional<int> multiplicity, std::optional<int> charge) {
            // At most 1024: a chunk holds 16 records per thread, and each thread is a real one.
            if (threads && (*threads < 1 || *threads > 1024))
                throw py::value_error("threads must be from 1 to 1024 (or None: every core)");
            const unsigned n = threads ? static_cast<unsigned>(*threads) : std::max(1U, std::thread::hardware_concurrency());
            return BuildMany(py::iter(records), build_settings(refine, notation, multiplicity, charge), n);
        },
        py::arg("records"), py::kw_only(), py::arg("threads") = py::none(), py::arg("refine") = true,
        py::arg("notation") = "auto", py::arg("multiplicity") = py::none(), py::arg("charge") = py::none(),
        "Builds many species on worker threads and yields the results in input order, one per record: a Structure,\n"
        "or a Failure (index, text, name, error, message, column) for a record that could not be built, so that no\n"
        "record is lost.\n\n"
        "records: any iterable of str (a SMILES or formula) or (text, name) tuples (name a str or None); it is read\n"
        "a chunk at a time, so a generator of millions of records is fine. threads: worker threads (default: every\n"
        "core); the results are the same for any number. refine, notation, multiplicity, charge: as build(), for\n"
        "every record. The GIL is released while a chunk is built. An exception raised by the iterable itself\n"
        "propagates.");
}

void add_build_and_shape(py::module_& m) {
    m.def(
        "build",
        [](const py::str& text, const std::optional<std::string>& name, bool refine, const std::string& notation,
           std::optional<int> multiplicity, std::optional<int> charge) {
            repel::python::BuildRequest request = build_settings(refine, notation, multiplicity, charge);
            request.text = text.cast<std::string>();
            request.name = name.value_or("");
            return call_library(request.text, [&] { return repel::python::build(request); });
        },
        py::arg("text"), py::kw_only(), py::arg("name") = py::none(), py::arg("refine") = true,
        py::arg("notation") = "auto", py::arg("multiplicity") = py::none(), py::arg("charge") = py::none(),
        "Builds the 3D structure of one species, as `repel build TEXT`.\n\n"
        "text: a SMILES (OpenSMILES) or a single-centre formula ('XeF4', 'SO4 2-'); implicit hydrogens are added.\n"
        "name: the title written in files (default: the text). refine: run the whole-molecule refinement (default\n"
        "True). notation: 'auto' (SMILES, else a formula), 'smiles' or 'formula' (as `repel build --smiles/--formula`).\n"
        "multiplicity: the spin multiplicity to write instead of the domain analysis's (checked against the\n"
        "electron count). charge: the total charge expected; it must equal the sum of the written formal charges.\n"
        "Returns a Structure (atom indices 0-based). Raises InputError (with .column) for input that cannot be read\n"
        "or built, an empty text included; UnsupportedError for what cannot be built yet; TypeError for arguments of\n"
        "the wrong type. Releases the GIL while building, so threads can build in parallel.");

    m.def(
        "build_conformers",
        [](const py::str& text, int count, double rmsd, int tries, unsigned long long seed,
           const std::optional<std::string>& name, bool refine, const std::string& notation,
           std::optional<int> multiplicity, std::optional<int> charge) {
            repel::python::BuildRequest request = build_settings(refine, notation, multiplicity, charge);
            request.text = text.cast<std::string>();
            request.name = name.value_or("");
            return call_library(request.text, [&] {
                return repel::python::build_conformers(request, count, rmsd, tries, seed);
            });
        },
        py::arg("text"), py::kw_only(), py::arg("count") = 10, py::arg("rmsd") = 0.5, py::arg("tries") = 0,
        py::arg("seed") = 1, py::arg("name") = py::none(), py::arg("refine") = true, py::arg("notation") = "auto",
        py::arg("multiplicity") = py::none(), py::arg("charge") = py::none(),
        "Up to `count` distinct conformers of one species, lowest energy first, as `repel build TEXT --conformers\n"
        "COUNT`: a list of Structure, each with its .conformer (rank, count, energy, relative_energy,\n"
        "rmsd_to_first). rmsd: conformers whose heavy atoms lie closer than this (Angstrom, superposed, symmetric\n"
        "atoms matched) are one. tries: candidates refined (0: two per conformer asked for, at least 12). seed: the\n"
        "same seed gives the same conformers. Every written stereocentre and double bond is kept. The other\n"
        "arguments and the errors as build(). Releases the GIL while building.");

    m.def(
        "shape",
        [](const py::str& text, const std::optional<std::string>& name) {
            const std::string t = text.cast<std::string>();
            const std::string doc =
                call_library(t, [&] { return repel::python::shape_json_text(t, name.value_or("")); });
            return py::module_::import("json").attr("loads")(doc);
        },
        py::arg("text"), py::kw_only(), py::arg("name") = py::none(),
        "The electron-domain analysis of every centre, as `repel shape TEXT --json`, as plain Python data: a dict\n"
        "with name, charge, multiplicity, unpaired_electrons, centres (a list of dicts: atom, element,\n"
        "steric_number, bonded_domains, lone_pairs, delocalised_lone_pairs, single_electrons, p_single_electrons,\n"
        "axe, electron_geometry, shape, angles [{atoms: [a, centre, b], degrees}], and metal for a d-block centre)\n"
        "and warnings. Atom indices are 0-based (the command line's JSON numbers them from 1); messages in text keep\n"
        "the command line's 1-based numbers. Raises InputError, UnsupportedError, TypeError as build() does.");

}

// A value from a user's object as T, or a TypeError saying what was expected (pybind11's own cast error does not).
template <typename T>
T cast_or_type_error(const py::handle& value, const char* expected) {
    if constexpr (std::is_base_of_v<py::array, T>) {
        T out = T::ensure(value);  // null (and the Python error cleared) when numpy cannot convert it
        if (out) return out;
    } else {
        try {
            return value.cast<T>();
        } catch (const py::cast_error&) {
        }
    }
    throw py::type_error(std::string(expected) + ", not " +
                         py::str(py::type::handle_of(value).attr("__name__")).cast<std::string>());
}

void add_check(py::module_& m) {
    m.def(
        "check",
        [](const py::object& source, std::optional<int> charge, std::optional<int> multiplicity,
           const std::optional<std::string>& smiles, bool fix) {
            repel::python::CheckRequest request;
            request.charge = charge;
            request.multiplicity = multiplicity;
            request.smiles = smiles.value_or("");
            request.fix = fix;
            py::list out;
            if (py::isinstance<Built>(source) || (py::hasattr(source, "get_atomic_numbers") &&
                                                  py::hasattr(source, "get_positions"))) {
                std::vector<int> numbers;
                std::vector<double> positions;
                std::string title;
                if (py::isinstance<Built>(source)) {
                    const Built& b = source.cast<const Built&>();
                    numbers = b.numbers;
                    positions = b.positions;
                    title = b.title;
                    if (!request.charge) request.charge = b.charge;
                    if (!request.multiplicity) request.multiplicity = b.multiplicity;
                } else {  // an ase.Atoms, or anything with the same two methods
                    numbers = cast_or_type_error<std::vector<int>>(source.attr("get_atomic_numbers")(),
                                                                   "get_atomic_numbers() must give integers");
                    const auto p = cast_or_type_error<py::array_t<double, py::array::c_style | py::array::forcecast>>(
                        source.attr("get_positions")(), "get_positions() must give an (n, 3) array of numbers");
                    if (p.ndim() != 2 || p.shape(1) != 3 || static_cast<size_t>(p.shape(0)) != numbers.size())
                        throw py::value_error("get_positions() must give one row of x, y, z per atom");
                    positions.assign(p.data(), p.data() + p.size());
                    if (py::hasattr(source, "info")) {
                        py::dict info = source.attr("info");
                        if (!request.charge && info.contains("charge"))
                            request.charge = cast_or_type_error<int>(info["charge"], "info['charge'] must be an int");
                        if (!request.multiplicity && info.contains("multiplicity"))
                            request.multiplicity =
                                cast_or_type_error<int>(info["multiplicity"], "info['multiplicity'] must be an int");
                        if (info.contains("name")) title = py::str(info["name"]).cast<std::string>();
                    }
                }
                out.append(result_dict(call_library("", [&] {
                    return repel::python::check_atoms(numbers, positions, title, request);
                })));
                return out;
            }
            const std::string path = fspath(source);
            // Python's own open() first: FileNotFoundError, PermissionError... as Python code would raise them.
            py::module_::import("builtins").attr("open")(path, "rb").attr("close")();
            const auto results = call_library("", [&] { return repel::python::check_file(path, request); });
            for (const auto& r : results) out.append(result_dict(r));
            return out;
        },
        py::arg("source"), py::kw_only(), py::arg("charge") = py::none(), py::arg("multiplicity") = py::none(),
        py::arg("smiles") = py::none(), py::arg("fix") = false,
        "Audits structures built elsewhere, as `repel check`: the electron-domain analysis applied to the measured\n"
        "coordinates, bond lengths, contacts, neighbours, valences and charge.\n\n"
        "source: a file path (str or os.PathLike; .xyz, .pdb, .sdf, .mol: every structure in it), a Structure, or\n"
        "an ase.Atoms (bonds are perceived from the coordinates; info['charge'] and info['multiplicity'] are used\n"
        "when present). charge, multiplicity: as `repel check --charge/--multiplicity` (else the file's or the\n"
        "object's; the charge else 0; without a multiplicity unpaired electrons are findings). smiles: the molecule\n"
        "the structure is meant to be, as `repel check --smiles` (its bond orders and charges are used). fix: also\n"
        "clean each structure, as `repel check --fix` (the refinement from the given coordinates, stereochemistry\n"
        "kept).\n"
        "Returns a list with one dict per structure: title, line (1-based line of the file where it starts, 0 for\n"
        "objects), error (None, or why it could not be audited), charge, multiplicity, notes, and findings, worst\n"
        "first, each a dict: kind, atoms (0-based indices, the atom the finding is about first), message (one line;\n"
        "it numbers atoms from 1, as the command line does), measured, expected (float or None), unit ('degrees',\n"
        "'angstrom' or ''), severity ('warning' or 'error'); and fixed, fix_summary: with fix=True the cleaned\n"
        "Structure (None when it could not be cleaned) and the one-line summary `repel check --fix` prints (None\n"
        "without fix). Raises OSError for a file that cannot be opened, InputError for one that cannot be read (an\n"
        "unknown extension, a malformed line).");
}

}  // namespace

PYBIND11_MODULE(repel, m) {
    m.doc() =
        "repel: 3D structures from SMILES and single-centre formulas by electron-domain repulsion.\n\n"
        "build(text) gives a Structure (elements, numpy positions in Angstrom, bonds, charge, multiplicity, warnings)\n"
        "that writes the same XYZ, SDF, PDB or JSON text as `repel build`; shape(text) gives the electron-domain\n"
        "analysis of `repel shape --json`; build_many(records, threads=N) builds many on worker threads and yields a\n"
        "Structure or a Failure per record, in order; check(path, Structure or ase.Atoms) audits structures built\n"
        "elsewhere, as `repel check` (fix=True also cleans them). Atom indices are 0-based everywhere in this module (the files it writes\n"
        "keep their formats' own numbering). Errors: InputError (a ValueError) for input that cannot be read or\n"
        "built, UnsupportedError (a RuntimeError) for what repel cannot build yet.";
    m.attr("__version__") = repel::python::version();

    add_exceptions(m);
    add_structure(m);
    add_build_and_shape(m);
    add_build_many(m);
    add_check(m);
}
