// The tuning report: one self-contained HTML page (no scripts, no network, figures inline as
// SVG) that prints on A4. Built from plain sections so the app decides what goes in:
//
//   header     title, when and by which tool it was made
//   sections   in order, each with a heading, paragraphs, tables and figures (the app uses: rig
//              and data, model with intervals, band, chosen gain, prediction, verification)
//   verdict    a coloured box when there is a verification result (pass / fail, one sentence)
//   cautions   the safety cautions, always last and never empty (DefaultSafetyCautions())
// Every text is HTML-escaped; figures are SVG documents as PLplot writes them (figure.h): their
// XML prolog and DOCTYPE are dropped and their element ids made unique per figure, so several
// can share the page.
#ifndef LOOPWRIGHT_IO_REPORT_H_
#define LOOPWRIGHT_IO_REPORT_H_

#include <optional>
#include <string>
#include <vector>

namespace lw {

struct ReportTable {
  std::vector<std::string> header;
  std::vector<std::vector<std::string>> rows;  // each row as long as the header
};

struct ReportFigure {
  std::string caption;
  std::string svg;  // a whole SVG document
};

struct ReportSection {
  std::string heading;
  std::vector<std::string> paragraphs;
  std::vector<ReportTable> tables;
  std::vector<ReportFigure> figures;
};

struct ReportVerdict {
  bool pass = false;
  std::string sentence;
};

struct ReportData {
  std::string title = "Loop tuning report";
  std::string created;  // ISO-8601 UTC
  std::string tool;     // e.g. "loopwright 0.1.0"
  std::vector<ReportSection> sections;
  std::optional<ReportVerdict> verdict;
  std::vector<std::string> cautions;  // empty: DefaultSafetyCautions()
};

// Emergency stop within reach, limits verified, start at a low gain, a qualified person
// decides, local codes and the site's procedures come first.
std::vector<std::string> DefaultSafetyCautions();

// The page. Throws UsageError when a table row's length differs from its header or a figure
// is not an SVG document.
std::string RenderReport(const ReportData& report);

// RenderReport written atomically (atomic_file.h).
void WriteReport(const std::string& path, const ReportData& report);

// An SVG document prepared for inlining: prolog and DOCTYPE dropped, id="X" and url(#X)
// renamed to `prefix`X, fixed width/height replaced by a responsive style. UsageError when
// `svg` holds no <svg element.
std::string InlineSvg(const std::string& svg, const std::string& prefix);

// Text with &, <, >, " escaped for HTML.
std::string EscapeHtml(const std::string& text);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_REPORT_H_
