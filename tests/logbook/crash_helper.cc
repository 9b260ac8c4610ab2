// Helper for kill_test.py, the logbook's crash test: a writer that adds results in a loop until
// it is killed, and a reader that reads while the writer writes.
//
//   crash_helper create PATH         make an empty logbook
//   crash_helper write PATH          add results forever; after each AddResult() returns prints
//                                    "committed SEQ" (SEQ = the result's id) and flushes
//   crash_helper read PATH SECONDS   read the whole logbook again and again for SECONDS; exits 1
//                                    with a message when a read fails or sees a row whose content
//                                    does not match its id, or the count goes backwards; else
//                                    prints "reads N max COUNT"
//
// Each result's summary carries its own id and a padding of 20 kB so that a kill is likely to
// land half-way through writing a transaction.
#include <chrono>
#include <cstdio>
#include <cstdlib>
#include <iostream>
#include <string>

#include "io/logbook.h"
#include "io/sha256.h"

namespace {

lw::NewResult ResultFor(int64_t seq) {
  lw::NewResult r;
  r.time = "2026-12-02T00:00:00Z";
  r.kind = seq % 3 == 0 ? "band" : "fit";
  r.outcome = "ok";
  r.command_line = "crash_helper write";
  r.summary = {{"seq", seq}, {"pad", std::string(20000, static_cast<char>('a' + seq % 26))}};
  for (int k = 0; k < 3; ++k) {
    // Appended piece by piece: GCC 12 warns falsely (-Wrestrict) on "literal" + to_string().
    std::string name = "rec-";
    name += std::to_string(seq);
    name += '-';
    name += std::to_string(k);
    r.recordings.push_back({0, name + ".csv", lw::Sha256Hex(name), seq + k, ""});
    r.parameters.push_back({"fopdt", std::string(1, static_cast<char>('a' + k)), "s",
                            seq + 0.25 * k, seq - 1.0, seq + 1.0});
  }
  return r;
}

// Empty when result `r` holds what ResultFor(r.id) wrote, else what differs.
std::string Mismatch(const lw::LoggedResult& r) {
  lw::NewResult want = ResultFor(r.id);
  if (r.summary != want.summary) return "summary";
  if (r.kind != want.kind) return "kind";
  if (r.recordings.size() != 3 || r.parameters.size() != 3) return "row counts";
  for (int k = 0; k < 3; ++k) {
    if (r.recordings[k].path != want.recordings[k].path) return "recording path";
    if (r.parameters[k].value != want.parameters[k].value) return "parameter value";
  }
  return "";
}

}  // namespace

int main(int argc, char** argv) {
  if (argc < 3) {
    std::cerr << "usage: crash_helper create|write|read PATH [SECONDS]\n";
    return 2;
  }
  std::string mode = argv[1], path = argv[2];
  try {
    if (mode == "create") {
      lw::Logbook::Create(path);
      return 0;
    }
    if (mode == "write") {
      lw::Logbook book = lw::Logbook::Open(path);
      for (;;) {
        int64_t seq = book.ResultCount() + 1;
        int64_t id = book.AddResult(ResultFor(seq));
        if (id != seq) {
          std::cerr << "id " << id << " for seq " << seq << "\n";
          return 1;
        }
        std::printf("committed %lld\n", static_cast<long long>(id));
        std::fflush(stdout);
      }
    }
    if (mode == "read" && argc == 4) {
      lw::LogbookOptions options;
      options.read_only = true;
      lw::Logbook book = lw::Logbook::Open(path, options);
      auto end =
          std::chrono::steady_clock::now() + std::chrono::duration<double>(std::atof(argv[3]));
      size_t reads = 0, max = 0;
      while (std::chrono::steady_clock::now() < end) {
        auto all = book.Results();
        if (all.size() < max) {
          std::cerr << "count went back from " << max << " to " << all.size() << "\n";
          return 1;
        }
        max = all.size();
        for (size_t i = 0; i < all.size(); ++i) {
          if (all[i].id != static_cast<int64_t>(i + 1)) {
            std::cerr << "result " << i + 1 << " missing\n";
            return 1;
          }
          std::string bad = Mismatch(all[i]);
          if (!bad.empty()) {
            std::cerr << "result " << all[i].id << ": wrong " << bad << "\n";
            return 1;
          }
        }
        ++reads;
      }
      std::printf("reads %zu max %zu\n", reads, max);
      return 0;
    }
  } catch (const std::exception& e) {
    std::cerr << "crash_helper " << mode << ": " << e.what() << "\n";
    return 1;
  }
  std::cerr << "usage: crash_helper create|write|read PATH [SECONDS]\n";
  return 2;
}
