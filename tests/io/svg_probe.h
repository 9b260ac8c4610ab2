// A small XML reader for checking the SVG figures in tests: it checks the document is well formed
// (one root, every start tag closed by its end tag, attributes quoted, entities known) and lists
// the elements with their attributes and the text of every <text> element (character references
// such as &#x30; decoded to UTF-8). Enough for PLplot's SVG output; not a general XML parser
// (no CDATA, no external entities; the DOCTYPE is skipped).
#ifndef LOOPWRIGHT_TESTS_IO_SVG_PROBE_H_
#define LOOPWRIGHT_TESTS_IO_SVG_PROBE_H_

#include <cstdint>
#include <map>
#include <stdexcept>
#include <string>
#include <vector>

namespace lw::test {

struct SvgElement {
  std::string name;
  std::map<std::string, std::string> attributes;
  std::string text;  // character data directly and in children (for <text>)
};

struct SvgProbe {
  std::vector<SvgElement> elements;  // document order
  std::vector<std::string> texts;    // decoded content of every <text>

  size_t Count(const std::string& name) const {
    size_t n = 0;
    for (const auto& e : elements) n += e.name == name;
    return n;
  }
  // Elements named `name` whose attribute `attribute` equals `value`.
  size_t Count(const std::string& name, const std::string& attribute,
               const std::string& value) const {
    size_t n = 0;
    for (const auto& e : elements) {
      auto it = e.attributes.find(attribute);
      n += e.name == name && it != e.attributes.end() && it->second == value;
    }
    return n;
  }
  // <polyline> elements stroked in `colour` that are lines, not filled areas (PLplot writes a
  // filled area as a polyline with a fill; a small one may carry a stroke too).
  std::vector<const SvgElement*> Lines(const std::string& colour) const {
    std::vector<const SvgElement*> out;
    for (const auto& e : elements) {
      auto stroke = e.attributes.find("stroke");
      auto fill = e.attributes.find("fill");
      if (e.name == "polyline" && stroke != e.attributes.end() && stroke->second == colour &&
          fill != e.attributes.end() && fill->second == "none")
        out.push_back(&e);
    }
    return out;
  }
  // The number of points of all those lines.
  size_t LinePoints(const std::string& colour) const {
    size_t n = 0;
    for (const SvgElement* e : Lines(colour)) {
      auto points = e->attributes.find("points");
      if (points != e->attributes.end())
        for (char c : points->second) n += c == ',';
    }
    return n;
  }
  bool HasText(const std::string& s) const {
    for (const auto& t : texts)
      if (t.find(s) != std::string::npos) return true;
    return false;
  }
};

inline void AppendUtf8(std::string& out, uint32_t c) {
  if (c < 0x80) {
    out += static_cast<char>(c);
  } else if (c < 0x800) {
    out += static_cast<char>(0xC0 | (c >> 6));
    out += static_cast<char>(0x80 | (c & 0x3F));
  } else if (c < 0x10000) {
    out += static_cast<char>(0xE0 | (c >> 12));
    out += static_cast<char>(0x80 | ((c >> 6) & 0x3F));
    out += static_cast<char>(0x80 | (c & 0x3F));
  } else {
    out += static_cast<char>(0xF0 | (c >> 18));
    out += static_cast<char>(0x80 | ((c >> 12) & 0x3F));
    out += static_cast<char>(0x80 | ((c >> 6) & 0x3F));
    out += static_cast<char>(0x80 | (c & 0x3F));
  }
}

inline std::string DecodeEntities(const std::string& s) {
  std::string out;
  for (size_t i = 0; i < s.size(); ++i) {
    if (s[i] != '&') {
      out += s[i];
      continue;
    }
    size_t semi = s.find(';', i);
    if (semi == std::string::npos) throw std::runtime_error("unterminated entity");
    std::string ent = s.substr(i + 1, semi - i - 1);
    if (ent == "amp")
      out += '&';
    else if (ent == "lt")
      out += '<';
    else if (ent == "gt")
      out += '>';
    else if (ent == "quot")
      out += '"';
    else if (ent == "apos")
      out += '\'';
    else if (ent.size() > 2 && ent[0] == '#' && (ent[1] == 'x' || ent[1] == 'X'))
      AppendUtf8(out, static_cast<uint32_t>(std::stoul(ent.substr(2), nullptr, 16)));
    else if (ent.size() > 1 && ent[0] == '#')
      AppendUtf8(out, static_cast<uint32_t>(std::stoul(ent.substr(1))));
    else
      throw std::runtime_error("unknown entity &" + ent + ";");
    i = semi;
  }
  return out;
}

// Throws std::runtime_error with the byte offset when the document is not well formed.
inline SvgProbe ProbeSvg(const std::string& doc) {
  SvgProbe probe;
  std::vector<size_t> open;  // indices into elements
  size_t i = 0, roots = 0;
  auto fail = [&](const std::string& why) {
    throw std::runtime_error("SVG not well formed at byte " + std::to_string(i) + ": " + why);
  };
  auto is_space = [](char c) { return c == ' ' || c == '\n' || c == '\t' || c == '\r'; };
  while (i < doc.size()) {
    if (doc[i] != '<') {
      size_t next = doc.find('<', i);
      if (next == std::string::npos) next = doc.size();
      std::string chunk = doc.substr(i, next - i);
      bool blank = chunk.find_first_not_of(" \n\t\r") == std::string::npos;
      if (!blank) {
        if (open.empty()) fail("text outside the root");
        std::string decoded = DecodeEntities(chunk);
        for (size_t k : open) probe.elements[k].text += decoded;
      }
      i = next;
      continue;
    }
    if (doc.compare(i, 5, "<?xml") == 0) {
      size_t end = doc.find("?>", i);
      if (end == std::string::npos) fail("unterminated declaration");
      i = end + 2;
    } else if (doc.compare(i, 4, "<!--") == 0) {
      size_t end = doc.find("-->", i);
      if (end == std::string::npos) fail("unterminated comment");
      i = end + 3;
    } else if (doc.compare(i, 2, "<!") == 0) {
      size_t end = doc.find('>', i);
      if (end == std::string::npos) fail("unterminated DOCTYPE");
      i = end + 1;
    } else if (doc.compare(i, 2, "</") == 0) {
      size_t end = doc.find('>', i);
      if (end == std::string::npos) fail("unterminated end tag");
      std::string name = doc.substr(i + 2, end - i - 2);
      while (!name.empty() && is_space(name.back())) name.pop_back();
      if (open.empty() || probe.elements[open.back()].name != name)
        fail("end tag </" + name + "> does not match");
      if (name == "text") probe.texts.push_back(probe.elements[open.back()].text);
      open.pop_back();
      i = end + 1;
    } else {
      size_t j = i + 1;
      while (j < doc.size() && !is_space(doc[j]) && doc[j] != '>' && doc[j] != '/') ++j;
      SvgElement e;
      e.name = doc.substr(i + 1, j - i - 1);
      if (e.name.empty()) fail("empty tag name");
      bool self_closing = false;
      while (true) {
        while (j < doc.size() && is_space(doc[j])) ++j;
        if (j >= doc.size()) fail("unterminated start tag");
        if (doc[j] == '>') {
          ++j;
          break;
        }
        if (doc.compare(j, 2, "/>") == 0) {
          self_closing = true;
          j += 2;
          break;
        }
        size_t eq = doc.find('=', j);
        if (eq == std::string::npos) fail("attribute without value");
        std::string key = doc.substr(j, eq - j);
        while (!key.empty() && is_space(key.back())) key.pop_back();
        size_t q = eq + 1;
        while (q < doc.size() && is_space(doc[q])) ++q;
        if (q >= doc.size() || (doc[q] != '"' && doc[q] != '\'')) fail("unquoted attribute");
        size_t close = doc.find(doc[q], q + 1);
        if (close == std::string::npos) fail("unterminated attribute");
        if (e.attributes.count(key)) fail("duplicate attribute " + key);
        e.attributes[key] = DecodeEntities(doc.substr(q + 1, close - q - 1));
        j = close + 1;
      }
      if (open.empty()) {
        if (++roots > 1) fail("second root element");
      }
      probe.elements.push_back(e);
      if (!self_closing) {
        open.push_back(probe.elements.size() - 1);
      } else if (e.name == "text") {
        probe.texts.push_back("");
      }
      i = j;
    }
  }
  if (!open.empty()) fail("unclosed <" + probe.elements[open.back()].name + ">");
  if (roots != 1) fail("no root element");
  return probe;
}

}  // namespace lw::test

#endif  // LOOPWRIGHT_TESTS_IO_SVG_PROBE_H_
