// Writing numeric tables as comma-separated text that csv_reader.h reads back exactly.
//
// Layout:
//   # <provenance>          one comment line (tool version, command line); omitted when empty
//   name1,name2,...         the header; a name holding ',', '"', '#', blanks at its ends or a
//                           line break is double-quoted ("" for a quote; line breaks become spaces)
//   v11,v21,...             one row per sample, each value in the shortest form that reads back to
//                           the same double (std::to_chars), LF line ends.
// The file is written atomically (atomic_file.h): on any failure no partial file is left and an
// existing file is untouched. Throws UsageError when the columns differ in length, a name is
// empty, names and columns differ in number, a value is NaN or infinite (the reader would reject
// it), or the file cannot be written ("cannot write 'PATH': <reason>").
#ifndef LOOPWRIGHT_IO_CSV_WRITER_H_
#define LOOPWRIGHT_IO_CSV_WRITER_H_

#include <span>
#include <string>
#include <vector>

namespace lw {

void WriteCsv(const std::string& path, const std::vector<std::string>& names,
              const std::vector<std::span<const double>>& columns, const std::string& provenance);

// The text WriteCsv writes (same checks, nothing written).
std::string FormatCsv(const std::vector<std::string>& names,
                      const std::vector<std::span<const double>>& columns,
                      const std::string& provenance);

}  // namespace lw

#endif  // LOOPWRIGHT_IO_CSV_WRITER_H_
