// The HTML report (io/report.h): self-contained (no scripts, no fetched resources), figures
// inline with ids unique across the page, text escaped, the safety cautions always present.
#include <doctest/doctest.h>

#include <cmath>
#include <regex>
#include <set>
#include <string>

#include "io/fit_figure.h"
#include "io/report.h"
#include "lti/error.h"
#include "temp_dir.h"

namespace {

std::string SmallFitSvg(const lw::test::TempDir& dir, const std::string& name) {
  lw::FitFigureData d;
  d.title = "Fit";
  for (int i = 0; i < 50; ++i) {
    double t = i * 0.2;
    d.t.push_back(t);
    d.input.push_back(t >= 1 ? 1.0 : 0.0);
    d.fitted.push_back(t >= 1 ? 1 - std::exp(-(t - 1)) : 0.0);
    d.measured.push_back(d.fitted.back() + 0.01 * ((i % 3) - 1));
  }
  d.step_times = {1.0};
  std::string path = dir.File(name);
  lw::WriteFitFigure(path, d);
  return lw::test::ReadText(path);
}

size_t Occurrences(const std::string& s, const std::string& what) {
  size_t n = 0;
  for (size_t p = s.find(what); p != std::string::npos; p = s.find(what, p + 1)) ++n;
  return n;
}

}  // namespace

TEST_CASE("report page: sections, tables, two inline figures with distinct ids, cautions") {
  lw::test::TempDir dir;
  lw::ReportData r;
  r.created = "2026-12-01T23:59:00Z";
  r.tool = "loopwright 0.1.0";
  lw::ReportSection model{"Model", {"Plant <fitted> & checked"}, {}, {}};
  model.tables.push_back({{"parameter", "value", "95 % interval"}, {{"K", "2.1", "[1.9, 2.3]"}}});
  model.figures.push_back({"Fit over the recording", SmallFitSvg(dir, "a.svg")});
  model.figures.push_back({"Same fit again", SmallFitSvg(dir, "b.svg")});
  r.sections.push_back(model);
  r.verdict = lw::ReportVerdict{true, "the measured response met every spec"};
  std::string html = lw::RenderReport(r);

  CHECK(html.rfind("<!DOCTYPE html>", 0) == 0);
  CHECK(html.find("<script") == std::string::npos);
  CHECK(html.find("<link") == std::string::npos);
  CHECK(html.find("src=") == std::string::npos);
  CHECK(html.find("<?xml") == std::string::npos);  // SVG prologs dropped
  CHECK(Occurrences(html, "<svg") == 2);
  CHECK(Occurrences(html, "<figcaption>") == 2);
  CHECK(html.find("Plant &lt;fitted&gt; &amp; checked") != std::string::npos);
  CHECK(html.find("<td>[1.9, 2.3]</td>") != std::string::npos);
  CHECK(html.find("PASS: the measured response met every spec") != std::string::npos);
  // Every id on the page is unique, and every url(#...) points at one of them.
  std::set<std::string> ids;
  std::regex id_re(R"(id="([^"]+)\")");
  for (auto it = std::sregex_iterator(html.begin(), html.end(), id_re);
       it != std::sregex_iterator(); ++it)
    CHECK_MESSAGE(ids.insert((*it)[1]).second, (*it)[1]);
  CHECK(ids.size() > 2);
  std::regex url_re(R"(url\(#([^)]+)\))");
  for (auto it = std::sregex_iterator(html.begin(), html.end(), url_re);
       it != std::sregex_iterator(); ++it)
    CHECK(ids.count((*it)[1]) == 1);
  // The safety cautions, in the wording of DefaultSafetyCautions().
  CHECK(html.find("Safety cautions") != std::string::npos);
  for (const auto& c : lw::DefaultSafetyCautions())
    CHECK(html.find(lw::EscapeHtml(c)) != std::string::npos);
  CHECK(html.find("emergency stop") != std::string::npos);
  CHECK(html.find("qualified person") != std::string::npos);
  CHECK(html.find("Local codes") != std::string::npos);
}

TEST_CASE("report errors and atomic writing") {
  lw::test::TempDir dir;
  lw::ReportData r;
  lw::ReportSection s{"Bad", {}, {}, {}};
  s.tables.push_back({{"a", "b"}, {{"only one"}}});
  r.sections.push_back(s);
  CHECK_THROWS_AS(lw::RenderReport(r), lw::UsageError);
  CHECK_THROWS_AS(lw::WriteReport(dir.File("r.html"), r), lw::UsageError);
  r.sections.clear();
  r.sections.push_back({"Figure", {}, {}, {{"not svg", "<html></html>"}}});
  CHECK_THROWS_AS(lw::RenderReport(r), lw::UsageError);
  CHECK(dir.Entries().empty());
  r.sections.clear();
  lw::WriteReport(dir.File("r.html"), r);
  CHECK(dir.Entries() == std::vector<std::string>{"r.html"});
}
