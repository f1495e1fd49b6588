#include "core/replace_file.hpp"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <stdexcept>

namespace repel {

void ReplaceFile::open(const std::string& path, Unfinished unfinished) {
    path_ = path;
    unfinished_ = unfinished;
    offset_ = 0;
    const std::string tmp = temporary_path(path);
    fd_ = ::open(tmp.c_str(), O_WRONLY | O_CREAT | O_TRUNC, 0666);
    if (fd_ < 0) throw std::runtime_error("cannot write " + tmp + " (" + std::strerror(errno) + ")");
}

void ReplaceFile::resume(const std::string& path, std::uint64_t offset) {
    path_ = path;
    unfinished_ = Unfinished::keep;
    const std::string tmp = temporary_path(path);
    fd_ = ::open(tmp.c_str(), O_WRONLY);
    if (fd_ < 0) throw std::runtime_error("cannot resume: " + tmp + " is missing (" + std::strerror(errno) + ")");
    struct stat st {};
    if (::fstat(fd_, &st) != 0 || static_cast<std::uint64_t>(st.st_size) < offset)
        throw std::runtime_error("cannot resume: " + tmp + " is shorter than its checkpoint says");
    if (::ftruncate(fd_, static_cast<off_t>(offset)) != 0 || ::lseek(fd_, static_cast<off_t>(offset), SEEK_SET) < 0)
        throw std::runtime_error("cannot resume: cannot truncate " + tmp);
    offset_ = offset;
}

void ReplaceFile::write(std::string_view text) {
    while (!text.empty()) {
        const ssize_t n = ::write(fd_, text.data(), text.size());
        if (n < 0) {
            if (errno == EINTR) continue;
            throw std::runtime_error("cannot write " + path_ + ": " + std::strerror(errno));
        }
        text.remove_prefix(static_cast<size_t>(n));
        offset_ += static_cast<std::uint64_t>(n);
    }
}

void ReplaceFile::fail(const std::string& message) {
    if (fd_ >= 0) ::close(fd_);
    fd_ = -1;
    if (unfinished_ == Unfinished::remove) std::remove(temporary_path(path_).c_str());
    throw std::runtime_error(message);
}

void ReplaceFile::commit() {
    if (fd_ < 0) throw std::runtime_error("cannot write " + path_ + ": the file is not open");
    // On the disk before the rename, so that a crash leaves the old file or the whole new one.
    if (::fsync(fd_) != 0) fail("cannot write " + path_ + ": " + std::strerror(errno));
    const int closed = ::close(fd_);
    fd_ = -1;
    if (closed != 0) fail("cannot write " + path_ + ": " + std::strerror(errno));
    if (std::rename(temporary_path(path_).c_str(), path_.c_str()) != 0)
        fail("cannot write " + path_ + ": " + std::strerror(errno));
}

ReplaceFile::~ReplaceFile() {
    if (fd_ < 0) return;
    ::close(fd_);
    if (unfinished_ == Unfinished::remove) std::remove(temporary_path(path_).c_str());
}

void replace_file(const std::string& path, std::string_view text) {
    ReplaceFile file(path);
    file.write(text);
    file.commit();
}

}  // namespace repel
