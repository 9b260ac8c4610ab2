#include "io/report.h"

#include <regex>

#include "io/atomic_file.h"
#include "lti/error.h"

namespace lw {

namespace {

// A print-friendly look of our own: serif body, a narrow coloured rule under each heading,
// tables with light row separators, figures at full text width.
constexpr const char* kStyle = R"(
@page { size: A4; margin: 16mm 14mm; }
body { font-family: "DejaVu Serif", Georgia, serif; color: #222; max-width: 182mm;
       margin: 0 auto; padding: 8mm 0; line-height: 1.4; font-size: 10.5pt; }
header { border-bottom: 3px solid #0072B2; margin-bottom: 6mm; }
h1 { font-family: "DejaVu Sans", sans-serif; font-size: 18pt; margin: 0 0 1mm 0; }
.meta { color: #555; font-size: 9pt; margin: 0 0 2mm 0; }
h2 { font-family: "DejaVu Sans", sans-serif; font-size: 12.5pt; margin: 7mm 0 2mm 0;
     padding-left: 3mm; border-left: 4px solid #E69F00; break-after: avoid; }
table { border-collapse: collapse; margin: 2mm 0 3mm 0; font-size: 9.5pt; }
th { text-align: left; font-family: "DejaVu Sans", sans-serif; font-weight: 600;
     border-bottom: 1.5px solid #444; padding: 1mm 3mm 1mm 0; }
td { border-bottom: 0.5px solid #ccc; padding: 0.8mm 3mm 0.8mm 0; vertical-align: top; }
figure { margin: 3mm 0; break-inside: avoid; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 9pt; color: #444; margin-top: 1mm; }
.verdict { padding: 3mm 4mm; margin: 4mm 0; font-family: "DejaVu Sans", sans-serif;
           font-weight: 600; border: 2px solid; }
.verdict.pass { border-color: #009E73; background: #e6f5f0; }
.verdict.fail { border-color: #D55E00; background: #fbeee5; }
.cautions { margin-top: 8mm; padding: 3mm 5mm; border: 2px solid #000; break-inside: avoid; }
.cautions h2 { border-left: none; padding-left: 0; margin-top: 1mm; }
.cautions li { margin: 1mm 0; }
)";

void AppendTable(std::string& html, const ReportTable& t) {
  html += "<table>\n<thead><tr>";
  for (const auto& h : t.header) html += "<th>" + EscapeHtml(h) + "</th>";
  html += "</tr></thead>\n<tbody>\n";
  for (const auto& row : t.rows) {
    if (row.size() != t.header.size())
      throw UsageError("report table row has " + std::to_string(row.size()) +
                       " cells but the header " + std::to_string(t.header.size()));
    html += "<tr>";
    for (const auto& c : row) html += "<td>" + EscapeHtml(c) + "</td>";
    html += "</tr>\n";
  }
  html += "</tbody>\n</table>\n";
}

}  // namespace

std::vector<std::string> DefaultSafetyCautions() {
  return {
      "Keep the emergency stop within reach of the person at the rig for every test.",
      "Verify the actuator and process limits and the interlocks on the rig itself before "
      "applying a new gain; the figures assume the limits stated here.",
      "Start at a low gain (below the recommended one) and raise it in small steps while "
      "watching the response.",
      "These numbers come from a model fitted to one recording; a qualified person decides "
      "whether and how they are used.",
      "Local codes, the plant's safety rules and the site's procedures come first and override "
      "anything in this report.",
  };
}

std::string EscapeHtml(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

std::string InlineSvg(const std::string& svg, const std::string& prefix) {
  size_t start = svg.find("<svg");
  if (start == std::string::npos) throw UsageError("report figure is not an SVG document");
  std::string body = svg.substr(start);
  body = std::regex_replace(body, std::regex(R"(id="([^"]+)\")"), "id=\"" + prefix + "$1\"");
  body = std::regex_replace(body, std::regex(R"(url\(#([^)]+)\))"), "url(#" + prefix + "$1)");
  // Only the root's size: the first width= and height= after <svg.
  size_t root_end = body.find('>');
  std::string root = body.substr(0, root_end);
  root = std::regex_replace(root, std::regex(R"(\s(width|height)="[^"]*")"), "");
  return root + " role=\"img\"" + body.substr(root_end);
}

std::string RenderReport(const ReportData& r) {
  std::string html;
  html += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  html += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  html += "<title>" + EscapeHtml(r.title) + "</title>\n<style>" + kStyle + "</style>\n";
  html += "</head>\n<body>\n<header>\n<h1>" + EscapeHtml(r.title) + "</h1>\n";
  std::string meta;
  if (!r.created.empty()) meta += "created " + r.created;
  if (!r.tool.empty()) {
    if (!meta.empty()) meta += " by ";
    meta += r.tool;
  }
  if (!meta.empty()) html += "<p class=\"meta\">" + EscapeHtml(meta) + "</p>\n";
  html += "</header>\n";
  if (r.verdict) {
    html += std::string("<div class=\"verdict ") + (r.verdict->pass ? "pass" : "fail") + "\">" +
            (r.verdict->pass ? "PASS: " : "FAIL: ") + EscapeHtml(r.verdict->sentence) + "</div>\n";
  }
  int figure_number = 0;
  for (const auto& s : r.sections) {
    html += "<section>\n<h2>" + EscapeHtml(s.heading) + "</h2>\n";
    for (const auto& p : s.paragraphs) html += "<p>" + EscapeHtml(p) + "</p>\n";
    for (const auto& t : s.tables) AppendTable(html, t);
    for (const auto& f : s.figures) {
      ++figure_number;
      const std::string number = std::to_string(figure_number);
      html += "<figure>\n";
      html += InlineSvg(f.svg, std::string("f").append(number).append("-"));
      html += "\n<figcaption>Figure ";
      html += number;
      html += ". ";
      html += EscapeHtml(f.caption);
      html += "</figcaption>\n</figure>\n";
    }
    html += "</section>\n";
  }
  std::vector<std::string> cautions = r.cautions.empty() ? DefaultSafetyCautions() : r.cautions;
  html += "<section class=\"cautions\">\n<h2>Safety cautions</h2>\n<ul>\n";
  for (const auto& c : cautions) html += "<li>" + EscapeHtml(c) + "</li>\n";
  html += "</ul>\n</section>\n</body>\n</html>\n";
  return html;
}

void WriteReport(const std::string& path, const ReportData& report) {
  WriteFileAtomically(path, RenderReport(report));
}

}  // namespace lw
