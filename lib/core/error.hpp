// Errors for the user: an input that is not what was expected, said with the record, the column and what was expected.
#pragma once

#include <stdexcept>
#include <string>

namespace repel {

// Thrown for bad input (a SMILES that does not parse, a file line that is malformed, a valence that cannot be
// satisfied). The library never prints and never exits; the front end turns this into a message and an exit status.
class InputError : public std::runtime_error {
public:
    // Control bytes in the message (a NUL or an escape sequence quoted from a hostile file) are written as \xNN, so
    // that the message prints whole and cannot drive a terminal.
    InputError(std::string what, std::string text = {}, int column = 0)
        : std::runtime_error(printable(what)), text_(std::move(text)), column_(column) {}

    // The input text the error is about (one line), empty when there is none.
    const std::string& text() const { return text_; }
    // 1-based column in text() where reading stopped; 0 when not about a column.
    int column() const { return column_; }

    // "column 5: expected ...\n  C1CC\n      ^" -- the message with the text and a caret under the column.
    std::string describe() const;

private:
    static std::string printable(const std::string& s);
    std::string text_;
    int column_ = 0;
};

// One small helper so that every reader reports alike.
[[noreturn]] void fail(const std::string& message, const std::string& text = {}, int column = 0);

// Thrown when a molecule is well formed but lies outside what repel can build yet (for example a transition-metal
// centre before that capability lands): said plainly, never answered with a wrong shape.
class UnsupportedError : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

}  // namespace repel
