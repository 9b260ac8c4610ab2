// libFuzzer target for the rig protocol parser and stream splitter (io/rig_protocol.h). Any input
// must parse to a status without crashing or throwing; a line that parses must encode again,
// and the encoded line must parse to the same message and encode to the same text (numbers are
// normalised once by %.9g, then stable). The splitter must give the same events however the
// bytes are cut, and its counts must add up.
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <string_view>
#include <vector>

#include "io/rig_protocol.h"
#include "lti/error.h"

namespace {

void Require(bool ok) {
  if (!ok) std::abort();
}

void CheckLine(std::string_view line) {
  const lw::RigParseResult first = lw::ParseRigLine(line);
  if (first.status != lw::RigParseStatus::kOk) {
    Require(!first.reason.empty());
    return;
  }
  std::string encoded;
  try {
    encoded = lw::EncodeRigLine(first.message);
  } catch (const lw::UsageError& e) {
    // Only length can fail: a short exponent form such as 1e5 prints longer as 100000.
    Require(std::string_view(e.what()).find("longer than") != std::string_view::npos);
    return;
  }
  const lw::RigParseResult second = lw::ParseRigLine(encoded);
  Require(second.status == lw::RigParseStatus::kOk);
  Require(second.message.kind == first.message.kind);
  Require(second.message.seq == first.message.seq);
  Require(lw::EncodeRigLine(second.message) == encoded);
}

struct Summary {
  std::vector<int> kinds;
  lw::RigStreamCounts counts;
};

Summary Split(std::string_view bytes, std::size_t cut) {
  Summary s;
  lw::RigLineSplitter splitter([&s](const lw::RigLineEvent& e) {
    s.kinds.push_back(static_cast<int>(e.kind));
    if (e.kind == lw::RigLineEvent::Kind::kMessage) CheckLine(lw::EncodeRigLine(e.message));
  });
  splitter.Feed(bytes.substr(0, cut));
  splitter.Feed(bytes.substr(cut));
  splitter.Finish();
  s.counts = splitter.counts();
  return s;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  const std::string_view bytes(reinterpret_cast<const char*>(data), size);
  // Each line on its own.
  std::size_t start = 0;
  while (start <= bytes.size()) {
    std::size_t end = bytes.find('\n', start);
    if (end == std::string_view::npos) end = bytes.size();
    CheckLine(bytes.substr(start, end - start));
    start = end + 1;
  }
  // The whole input as a stream, cut at two places the input chooses.
  const std::size_t cut_a = size ? data[0] % (size + 1) : 0;
  const std::size_t cut_b = size > 1 ? (data[size - 1] * 7u) % (size + 1) : 0;
  const Summary a = Split(bytes, cut_a);
  const Summary b = Split(bytes, cut_b);
  Require(a.kinds == b.kinds);
  const lw::RigStreamCounts& n = a.counts;
  Require(n.bytes == size);
  Require(n.lines == n.valid + n.rejected);
  Require(n.bad_crc <= n.rejected);
  Require(n.dropped <= n.missing);
  return 0;
}
