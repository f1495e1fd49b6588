// core/replace_file: a file is replaced whole or not at all, and the temporary beside it never outlives a failure
// (unless kept for a resume).
#include <gtest/gtest.h>

#include <filesystem>
#include <fstream>
#include <sstream>
#include <stdexcept>
#include <unistd.h>

#include "core/replace_file.hpp"

using namespace repel;
namespace fs = std::filesystem;

namespace {

std::string slurp(const fs::path& p) {
    std::ifstream f(p, std::ios::binary);
    std::stringstream s;
    s << f.rdbuf();
    return s.str();
}

fs::path fresh_dir(const std::string& name) {
    const fs::path d = fs::temp_directory_path() / ("repel_test_replace_" + name + "_" + std::to_string(::getpid()));
    fs::remove_all(d);
    fs::create_directories(d);
    return d;
}

}  // namespace

TEST(ReplaceFile, OldContentUntilCommitThenNewAndNoTemporary) {
    const fs::path d = fresh_dir("commit");
    const std::string path = (d / "out.xyz").string();
    std::ofstream(path) << "old";
    {
        ReplaceFile f(path);
        f.write("new ");
        f.write("content");
        EXPECT_EQ(slurp(path), "old");  // readers still see the old file
        EXPECT_TRUE(fs::exists(ReplaceFile::temporary_path(path)));
        EXPECT_EQ(f.offset(), 11u);
        f.commit();
    }
    EXPECT_EQ(slurp(path), "new content");
    EXPECT_FALSE(fs::exists(ReplaceFile::temporary_path(path)));
    replace_file(path, "again");
    EXPECT_EQ(slurp(path), "again");
    fs::remove_all(d);
}

TEST(ReplaceFile, AbandonedWriteLeavesTheOldFileAndRemovesTheTemporary) {
    const fs::path d = fresh_dir("abandon");
    const std::string path = (d / "out.sdf").string();
    std::ofstream(path) << "old";
    {
        ReplaceFile f(path);
        f.write("half a rec");
    }  // no commit: an exception unwound past it
    EXPECT_EQ(slurp(path), "old");
    EXPECT_FALSE(fs::exists(ReplaceFile::temporary_path(path)));
    fs::remove_all(d);
}

TEST(ReplaceFile, FailedRenameThrowsAndRemovesTheTemporary) {
    const fs::path d = fresh_dir("fail");
    // The target is a non-empty directory: rename(2) cannot replace it.
    const fs::path target = d / "busy";
    fs::create_directories(target / "inside");
    ReplaceFile f(target.string());
    f.write("text");
    EXPECT_THROW(f.commit(), std::runtime_error);
    EXPECT_FALSE(fs::exists(ReplaceFile::temporary_path(target.string())));
    EXPECT_TRUE(fs::is_directory(target));
    // A directory that does not exist: refused when the temporary is made.
    EXPECT_THROW(ReplaceFile((d / "missing" / "x.xyz").string()), std::runtime_error);
    fs::remove_all(d);
}

TEST(ReplaceFile, KeptTemporaryIsResumedAtItsOffset) {
    const fs::path d = fresh_dir("resume");
    const std::string path = (d / "batch.smi.sdf").string();
    {
        ReplaceFile f(path, ReplaceFile::Unfinished::keep);
        f.write("record 1\nrecord 2\nhalf");
    }  // interrupted: the temporary stays for --resume
    ASSERT_TRUE(fs::exists(ReplaceFile::temporary_path(path)));
    {
        ReplaceFile f;
        f.resume(path, 18);  // the checkpoint's count: the two whole records
        f.write("record 3\n");
        f.commit();
    }
    EXPECT_EQ(slurp(path), "record 1\nrecord 2\nrecord 3\n");
    ReplaceFile g;
    EXPECT_THROW(g.resume(path, 5), std::runtime_error);  // no temporary left to resume
    fs::remove_all(d);
}
