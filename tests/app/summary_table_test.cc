// The shared summary table printer (src/app/summary_table.h): alignment, colour only on request,
// and identical layout with and without colour.
#include "app/summary_table.h"

#include <sstream>
#include <string>
#include <vector>

#include <doctest/doctest.h>

namespace {

std::vector<std::string> Lines(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  for (std::string l; std::getline(in, l);) lines.push_back(l);
  return lines;
}

// The text with every ANSI "ESC [ ... m" sequence removed.
std::string StripAnsi(const std::string& s) {
  std::string out;
  for (size_t i = 0; i < s.size(); ++i) {
    if (s[i] == '\033') {
      while (i < s.size() && s[i] != 'm') ++i;
      continue;
    }
    out += s[i];
  }
  return out;
}

lw::app::SummaryTable Sample() {
  lw::app::SummaryTable t({"quantity", "value", "limit", "verdict"});
  t.AddRow({"overshoot", "8.2 %", "<= 10 %", lw::app::OkFail(true)});
  t.AddRow({"settling time", "14.1 s", "<= 3 s", lw::app::OkFail(false)});
  t.AddRow({"damping ζ", "0.62"});
  return t;
}

}  // namespace

TEST_CASE("summary table: aligned columns, numbers right-aligned, header underlined") {
  auto lines = Lines(Sample().Render(false, 2));
  REQUIRE(lines.size() == 5);
  CHECK(lines[0] == "  quantity        value  limit    verdict");
  CHECK(lines[1] == "  -------------  ------  -------  -------");
  CHECK(lines[2] == "  overshoot       8.2 %  <= 10 %  OK");
  CHECK(lines[3] == "  settling time  14.1 s  <= 3 s   FAIL");
  // A short row is padded; the multi-byte zeta counts as one column; no trailing blanks.
  CHECK(lines[4] == "  damping ζ        0.62");
  for (const auto& l : lines) CHECK(l.find('\033') == std::string::npos);
}

TEST_CASE("summary table: colour adds escapes around verdict cells only, layout unchanged") {
  lw::app::SummaryTable t = Sample();
  std::string plain = t.Render(false, 0);
  std::string coloured = t.Render(true, 0);
  CHECK(coloured != plain);
  CHECK(StripAnsi(coloured) == plain);
  CHECK(coloured.find("\033[32mOK\033[0m") != std::string::npos);
  CHECK(coloured.find("\033[31mFAIL\033[0m") != std::string::npos);
  CHECK(coloured.find("\033[1mquantity\033[0m") != std::string::npos);
  // Value cells stay plain.
  CHECK(coloured.find("\033[0m8.2") == std::string::npos);
  CHECK(coloured.find("8.2 %") != std::string::npos);
}

TEST_CASE("summary table: Verdict texts and an empty table") {
  auto v = lw::app::Verdict(false, "inside", "outside");
  CHECK(v.text == "outside");
  CHECK(v.mark == lw::app::CellMark::kFail);
  CHECK(lw::app::OkFail(true).mark == lw::app::CellMark::kOk);
  lw::app::SummaryTable empty({"a", "bb"});
  CHECK(empty.rows() == 0);
  CHECK(empty.Render(false, 0) == "a  bb\n-  --\n");
}
