// A file replaced whole or not at all: written to a temporary beside it (`path.partial`, in the same directory so that
// the rename cannot cross file systems), flushed to the disk, then renamed over `path`. Readers of `path` see the old
// file or the new one, never half of one. Used for every file repel writes (outputs, pictures, reports, batch outputs).
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

namespace repel {

class ReplaceFile {
public:
    // What becomes of the temporary when commit() is never reached or fails: removed (a single output), or kept (a
    // batch output that `--resume` continues).
    enum class Unfinished { remove, keep };

    static std::string temporary_path(const std::string& path) { return path + ".partial"; }

    ReplaceFile() = default;
    explicit ReplaceFile(const std::string& path, Unfinished unfinished = Unfinished::remove) { open(path, unfinished); }
    ~ReplaceFile();
    ReplaceFile(const ReplaceFile&) = delete;
    ReplaceFile& operator=(const ReplaceFile&) = delete;

    // Starts an empty temporary for path. Throws std::runtime_error when it cannot be created.
    void open(const std::string& path, Unfinished unfinished = Unfinished::remove);
    // Continues the temporary an earlier run left (kept on failure), cut back to `offset` bytes. Throws
    // std::runtime_error when it is missing or shorter.
    void resume(const std::string& path, std::uint64_t offset);
    // Appends text (whole, retrying short writes). Throws std::runtime_error on a write error.
    void write(std::string_view text);
    std::uint64_t offset() const { return offset_; }
    bool is_open() const { return fd_ >= 0; }
    // Flushes the temporary to the disk, closes it and renames it over path. Throws std::runtime_error on failure
    // (after removing the temporary, unless it is kept).
    void commit();

private:
    void fail(const std::string& message);

    std::string path_;
    int fd_ = -1;
    std::uint64_t offset_ = 0;
    Unfinished unfinished_ = Unfinished::remove;
};

// Writes text as the whole content of path through a ReplaceFile.
void replace_file(const std::string& path, std::string_view text);

}  // namespace repel
