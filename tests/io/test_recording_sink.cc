// The recording sink (io/recording_sink.h): rows read back exactly, notes land as comments, an
// existing file is never overwritten, and rows survive the writing process being killed with
// SIGKILL once the flush interval has passed (POSIX: data handed to write(2) belongs to the
// kernel, not to the process).
#include "io/recording_sink.h"

#include <signal.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <thread>

#include <doctest/doctest.h>

#include "io/csv_reader.h"
#include "lti/error.h"
#include "tests/io/temp_dir.h"

namespace lw {
namespace {

TEST_CASE("recording sink: rows read back exactly, with provenance and notes as comments") {
  test::TempDir dir;
  std::string path = dir.File("rec.csv");
  {
    RecordingSink sink(path, {.provenance = "loopwright record: test\nsecond line"});
    sink.AddSample(7, 1042000, 150.0, 55.2, 148.31);
    sink.AddSample(8, 1043000, 150.0, 0.1, 1.0 / 3.0);
    sink.NoteGap(9, 11);
    sink.AddSample(12, 1046000, 151.5, -2.5e-7, 1e300);
    sink.NoteCorrupted(12, 2);
    sink.NoteGap(13, 13);
    sink.Note("safe stop sent");
    CHECK(sink.samples() == 3);
    sink.Close();
  }
  Table t = ReadCsv(path);
  REQUIRE(t.names == std::vector<std::string>{"t", "r", "u", "y", "seq"});
  REQUIRE(t.rows() == 3);
  CHECK(t.columns[0][0] == 1.042);
  CHECK(t.columns[0][2] == 1.046);
  CHECK(t.columns[2][0] == 55.2);
  CHECK(t.columns[3][1] == 1.0 / 3.0);  // shortest round-trip text reads back bit for bit
  CHECK(t.columns[2][2] == -2.5e-7);
  CHECK(t.columns[3][2] == 1e300);
  CHECK(t.columns[4][2] == 12);
  REQUIRE(t.comments.size() == 5);
  CHECK(t.comments[0] == "loopwright record: test second line");
  CHECK(t.comments[1] == "gap: sequence 9 to 11 missing (3 lines)");
  CHECK(t.comments[2] == "corrupted: 2 lines failed their check after sequence 12");
  CHECK(t.comments[3] == "gap: sequence 13 missing (1 line)");
  CHECK(t.comments[4] == "safe stop sent");
}

TEST_CASE("recording sink: a gap across the 2^32 wrap counts modulo 2^32") {
  test::TempDir dir;
  std::string path = dir.File("wrap.csv");
  {
    RecordingSink sink(path, {});
    sink.NoteGap(4294967294u, 1u);  // 4294967294, 4294967295, 0, 1
  }
  Table t = ParseCsv(test::ReadText(path) + "", "wrap.csv");
  REQUIRE(t.comments.size() == 1);
  CHECK(t.comments[0] == "gap: sequence 4294967294 to 1 missing (4 lines)");
}

TEST_CASE("recording sink: an existing file is refused and left as it was") {
  test::TempDir dir;
  std::string path = dir.File("old.csv");
  test::WriteText(path, "t,y\n0,1\n");
  CHECK_THROWS_AS(RecordingSink(path, {}), UsageError);
  CHECK(test::ReadText(path) == "t,y\n0,1\n");
  CHECK_THROWS_AS(RecordingSink(dir.File("no/such/folder.csv"), {}), UsageError);
  RecordingSinkOptions bad;
  bad.flush_interval = std::chrono::milliseconds(250);
  CHECK_THROWS_AS(bad.Validate(), UsageError);
}

TEST_CASE("recording sink: rows are in the file within the flush interval, without Close") {
  test::TempDir dir;
  std::string path = dir.File("live.csv");
  RecordingSink sink(path, {.provenance = {}, .flush_interval = std::chrono::milliseconds(20)});
  sink.AddSample(1, 0, 0, 1, 2);
  std::this_thread::sleep_for(std::chrono::milliseconds(30));
  sink.FlushIfDue();
  Table t = ReadCsv(path);
  CHECK(t.rows() == 1);
}

TEST_CASE("recording sink: a writer killed with SIGKILL leaves every row it flushed, whole") {
  test::TempDir dir;
  std::string path = dir.File("killed.csv");
  int ready[2];
  REQUIRE(pipe(ready) == 0);
  pid_t child = fork();
  REQUIRE(child >= 0);
  if (child == 0) {
    close(ready[0]);
    RecordingSink sink(path, {.provenance = {}, .flush_interval = std::chrono::milliseconds(5)});
    for (uint32_t i = 0; i < 2000; ++i) sink.AddSample(i, uint64_t{i} * 1000, 1, 2, i * 0.5);
    std::this_thread::sleep_for(std::chrono::milliseconds(10));
    sink.FlushIfDue();  // everything up to here is now the kernel's
    char c = 'x';
    if (write(ready[1], &c, 1) != 1) _exit(3);
    for (uint32_t i = 2000; i < 2010; ++i) sink.AddSample(i, uint64_t{i} * 1000, 1, 2, i * 0.5);
    for (;;) pause();  // killed here, with up to ten rows still in its buffer
  }
  close(ready[1]);
  char c = 0;
  REQUIRE(read(ready[0], &c, 1) == 1);
  std::this_thread::sleep_for(std::chrono::milliseconds(50));
  kill(child, SIGKILL);
  int status = 0;
  waitpid(child, &status, 0);
  close(ready[0]);
  REQUIRE(WIFSIGNALED(status));
  std::string text = test::ReadText(path);
  REQUIRE(!text.empty());
  CHECK(text.back() == '\n');  // only whole lines were written
  Table t = ParseCsv(text, "killed.csv");
  REQUIRE(t.rows() >= 2000);
  CHECK(t.rows() <= 2010);
  for (size_t i = 0; i < t.rows(); ++i) {
    if (t.columns[4][i] != static_cast<double>(i) || t.columns[3][i] != i * 0.5) {
      FAIL("row " << i << " is not sample " << i);
    }
  }
}

}  // namespace
}  // namespace lw
