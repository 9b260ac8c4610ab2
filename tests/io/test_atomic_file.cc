#include "io/atomic_file.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

#include <doctest/doctest.h>

#include <stdexcept>

#include "lti/error.h"
#include "tests/io/temp_dir.h"

using lw::test::ReadText;
using lw::test::TempDir;
using lw::test::WriteText;

TEST_CASE("WriteFileAtomically writes the whole content and leaves no temporary") {
  TempDir dir;
  const std::string path = dir.File("out.txt");
  lw::WriteFileAtomically(path, "first\nsecond\n");
  CHECK(ReadText(path) == "first\nsecond\n");
  CHECK(dir.Entries() == std::vector<std::string>{"out.txt"});
  // Replacing an existing file.
  lw::WriteFileAtomically(path, "replaced");
  CHECK(ReadText(path) == "replaced");
  CHECK(dir.Entries() == std::vector<std::string>{"out.txt"});
}

TEST_CASE("Large writes larger than the buffer arrive intact") {
  TempDir dir;
  std::string big;
  for (int i = 0; i < 300000; ++i) big += std::to_string(i) + "\n";
  lw::AtomicFile file(dir.File("big.txt"));
  file.Write("head\n");
  file.Write(big);
  file.Write("tail\n");
  file.Commit();
  CHECK(ReadText(dir.File("big.txt")) == "head\n" + big + "tail\n");
}

TEST_CASE("An uncommitted file leaves nothing, and an existing target is untouched") {
  TempDir dir;
  const std::string path = dir.File("model.json");
  {
    lw::AtomicFile file(path);
    file.Write("partial");
    CHECK(std::filesystem::exists(file.temporary_path()));
    CHECK_FALSE(std::filesystem::exists(path));
  }
  CHECK(dir.Entries().empty());

  WriteText(path, "old contents");
  try {
    lw::AtomicFile file(path);
    file.Write("new but incomplete");
    throw std::runtime_error("the command failed half way");
  } catch (const std::runtime_error&) {
  }
  CHECK(ReadText(path) == "old contents");
  CHECK(dir.Entries() == std::vector<std::string>{"model.json"});
}

TEST_CASE("A folder that does not exist is a usage error naming the path") {
  TempDir dir;
  const std::string path = dir.File("missing/out.csv");
  CHECK_THROWS_WITH_AS(lw::WriteFileAtomically(path, "x"),
                       ("cannot write '" + path + "': No such file or directory").c_str(),
                       lw::UsageError);
}

TEST_CASE("A read-only folder fails before anything is written") {
  if (geteuid() == 0) return;  // root may write anywhere; the check would not mean anything
  TempDir dir;
  const std::string sub = dir.File("ro");
  REQUIRE(mkdir(sub.c_str(), 0555) == 0);
  CHECK_THROWS_AS(lw::WriteFileAtomically(sub + "/out.txt", "x"), lw::UsageError);
  chmod(sub.c_str(), 0755);
  CHECK(std::filesystem::is_empty(sub));
}

TEST_CASE("A failing rename (target is a folder) removes the temporary and keeps the folder") {
  TempDir dir;
  const std::string target = dir.File("taken");
  REQUIRE(mkdir(target.c_str(), 0755) == 0);
  WriteText(target + "/inside", "keep");
  CHECK_THROWS_AS(lw::WriteFileAtomically(target, "x"), lw::UsageError);
  CHECK(dir.Entries() == std::vector<std::string>{"taken"});
  CHECK(ReadText(target + "/inside") == "keep");
}

TEST_CASE("The new file has the usual permissions (0666 minus umask)") {
  TempDir dir;
  const mode_t old = umask(022);
  lw::WriteFileAtomically(dir.File("perm.txt"), "x");
  umask(old);
  struct stat st;
  REQUIRE(stat(dir.File("perm.txt").c_str(), &st) == 0);
  CHECK((st.st_mode & 0777) == 0644);
}

TEST_CASE("Commit twice is refused") {
  TempDir dir;
  lw::AtomicFile file(dir.File("once.txt"));
  file.Write("a");
  file.Commit();
  CHECK_THROWS_AS(file.Commit(), lw::UsageError);
  CHECK(ReadText(dir.File("once.txt")) == "a");
}

TEST_CASE(
    "A FIFO target is written on Commit and never replaced (as -o /dev/null or /dev/stdout)") {
  TempDir dir;
  const std::string fifo = dir.File("pipe");
  REQUIRE(mkfifo(fifo.c_str(), 0600) == 0);
  {
    lw::AtomicFile dropped(fifo);  // not committed: nothing opened, nothing written
    dropped.Write("lost");
  }
  // The read end is opened first (non-blocking), so the writer's open succeeds at once and the
  // bytes wait in the pipe; with a replaced FIFO nothing arrives and the test fails, not hangs.
  const int rfd = open(fifo.c_str(), O_RDONLY | O_NONBLOCK);
  REQUIRE(rfd >= 0);
  lw::AtomicFile file(fifo);
  file.Write("through ");
  file.Write("the pipe\n");
  file.Commit();
  char buf[64];
  const ssize_t n = read(rfd, buf, sizeof buf);
  close(rfd);
  const std::string got = n > 0 ? std::string(buf, static_cast<size_t>(n)) : std::string();
  CHECK(got == "through the pipe\n");
  struct stat st;
  REQUIRE(lstat(fifo.c_str(), &st) == 0);
  CHECK(S_ISFIFO(st.st_mode));
  CHECK(dir.Entries() == std::vector<std::string>{"pipe"});
}

TEST_CASE("A symbolic link target keeps the link; the file it names is replaced") {
  TempDir dir;
  WriteText(dir.File("real.txt"), "old");
  REQUIRE(symlink("real.txt", dir.File("link.txt").c_str()) == 0);
  lw::WriteFileAtomically(dir.File("link.txt"), "new");
  struct stat st;
  REQUIRE(lstat(dir.File("link.txt").c_str(), &st) == 0);
  CHECK(S_ISLNK(st.st_mode));
  CHECK(ReadText(dir.File("real.txt")) == "new");
  CHECK(dir.Entries() == std::vector<std::string>{"link.txt", "real.txt"});
}
