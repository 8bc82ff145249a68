#include "io/xml.hpp"

#include <cstdint>

#include "base/error.hpp"

namespace critplex::io {

namespace {

// Length of the UTF-8 sequence starting at text[i] and its code point, or 0 when the
// bytes there are not a well-formed sequence.
std::size_t decode_utf8(std::string_view text, std::size_t i, char32_t& code) {
  const auto byte = [&](std::size_t k) { return static_cast<unsigned char>(text[k]); };
  const unsigned char b0 = byte(i);
  if (b0 < 0x80) {
    code = b0;
    return 1;
  }
  std::size_t length = 0;
  char32_t minimum = 0;
  if ((b0 & 0xE0) == 0xC0) length = 2, code = b0 & 0x1F, minimum = 0x80;
  else if ((b0 & 0xF0) == 0xE0) length = 3, code = b0 & 0x0F, minimum = 0x800;
  else if ((b0 & 0xF8) == 0xF0) length = 4, code = b0 & 0x07, minimum = 0x10000;
  else return 0;
  if (i + length > text.size()) return 0;
  for (std::size_t k = 1; k < length; ++k) {
    if ((byte(i + k) & 0xC0) != 0x80) return 0;
    code = (code << 6) | (byte(i + k) & 0x3F);
  }
  if (code < minimum || code > 0x10FFFF || (code >= 0xD800 && code <= 0xDFFF)) return 0;
  return length;
}

// XML 1.0 "Char": tab, line feed, carriage return and the printable planes.
bool is_xml_char(char32_t c) {
  return c == 0x9 || c == 0xA || c == 0xD || (c >= 0x20 && c <= 0xD7FF) || (c >= 0xE000 && c <= 0xFFFD) ||
         (c >= 0x10000 && c <= 0x10FFFF);
}

void append_utf8(std::string& out, char32_t c) {
  if (c < 0x80) {
    out.push_back(static_cast<char>(c));
  } else if (c < 0x800) {
    out.push_back(static_cast<char>(0xC0 | (c >> 6)));
    out.push_back(static_cast<char>(0x80 | (c & 0x3F)));
  } else if (c < 0x10000) {
    out.push_back(static_cast<char>(0xE0 | (c >> 12)));
    out.push_back(static_cast<char>(0x80 | ((c >> 6) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | (c & 0x3F)));
  } else {
    out.push_back(static_cast<char>(0xF0 | (c >> 18)));
    out.push_back(static_cast<char>(0x80 | ((c >> 12) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | ((c >> 6) & 0x3F)));
    out.push_back(static_cast<char>(0x80 | (c & 0x3F)));
  }
}

bool is_space(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }
bool is_name_start(char c) {
  const auto u = static_cast<unsigned char>(c);
  return (u >= 'a' && u <= 'z') || (u >= 'A' && u <= 'Z') || u == '_' || u == ':' || u >= 0x80;
}
bool is_name_char(char c) { return is_name_start(c) || (c >= '0' && c <= '9') || c == '-' || c == '.'; }

class Parser {
 public:
  Parser(std::string_view text, const std::string& source, const XmlLimits& limits)
      : s_(text), source_(source), limits_(limits) {}

  XmlElement document() {
    if (s_.size() > limits_.max_bytes)
      error(0, "the document has " + std::to_string(s_.size()) + " bytes, more than the limit of " +
                   std::to_string(limits_.max_bytes));
    check_characters();
    if (starts("\xEF\xBB\xBF")) pos_ = 3;  // a byte-order mark is allowed before the declaration
    if (starts("<?xml") && pos_ + 5 < s_.size() && is_space(s_[pos_ + 5])) declaration();
    skip_misc();
    if (starts("<!DOCTYPE")) error(pos_, "a DOCTYPE declaration is not supported (no DTD, no custom entities)");
    if (!starts("<")) error(pos_, pos_ >= s_.size() ? "no root element" : "expected the root element");
    XmlElement root;
    element(root, 1);
    skip_misc();
    if (pos_ < s_.size()) error(pos_, "content after the end of the root element <" + root.name + ">");
    return root;
  }

 private:
  std::string_view s_;
  const std::string& source_;
  const XmlLimits& limits_;
  std::size_t pos_ = 0;
  std::size_t elements_ = 0;
  // Line and column of a recent offset, so that locating each start tag costs only the
  // text since the previous one.
  std::size_t mark_ = 0, mark_line_ = 1, mark_column_ = 1;

  bool starts(std::string_view token) const { return s_.substr(std::min(pos_, s_.size())).starts_with(token); }

  void locate(std::size_t at, std::size_t& line, std::size_t& column) {
    if (at < mark_) mark_ = 0, mark_line_ = 1, mark_column_ = 1;
    for (; mark_ < at && mark_ < s_.size(); ++mark_) {
      const char c = s_[mark_];
      if (c == '\n') ++mark_line_, mark_column_ = 1;
      else if ((static_cast<unsigned char>(c) & 0xC0) != 0x80) ++mark_column_;  // count characters, not bytes
    }
    line = mark_line_;
    column = mark_column_;
  }

  [[noreturn]] void error(std::size_t at, const std::string& what) {
    std::size_t line = 0, column = 0;
    locate(at, line, column);
    fail(ErrorKind::parse, source_ + ": XML line " + std::to_string(line) + ", column " + std::to_string(column) +
                               ": " + what);
  }

  // Every character must be well-formed UTF-8 and an XML character; checked once up front
  // so that names and text copied out later are valid UTF-8.
  void check_characters() {
    for (std::size_t i = 0; i < s_.size();) {
      char32_t c = 0;
      const std::size_t n = decode_utf8(s_, i, c);
      if (n == 0) error(i, "the bytes here are not valid UTF-8");
      if (!is_xml_char(c)) {
        static const char* digits = "0123456789ABCDEF";
        std::string hex;
        for (int shift = 20; shift >= 0; shift -= 4)
          if ((c >> shift) != 0 || shift < 8) hex.push_back(digits[(c >> shift) & 0xF]);
        error(i, "character U+" + hex + " is not allowed in XML");
      }
      i += n;
    }
  }

  void skip_space() {
    while (pos_ < s_.size() && is_space(s_[pos_])) ++pos_;
  }

  // Whitespace, comments and processing instructions outside the root element.
  void skip_misc() {
    while (true) {
      skip_space();
      if (starts("<!--")) comment();
      else if (starts("<?")) instruction();
      else return;
    }
  }

  void comment() {
    const std::size_t start = pos_;
    const std::size_t dashes = s_.find("--", pos_ + 4);
    if (dashes == std::string_view::npos) error(start, "the comment is not closed by -->");
    if (dashes + 2 >= s_.size() || s_[dashes + 2] != '>') error(dashes, "'--' inside a comment");
    pos_ = dashes + 3;
  }

  void instruction() {
    const std::size_t start = pos_;
    pos_ += 2;
    const std::string target = name();
    if (target.size() == 3 && (target[0] | 0x20) == 'x' && (target[1] | 0x20) == 'm' && (target[2] | 0x20) == 'l')
      error(start, "an XML declaration is allowed only at the very start of the document");
    const std::size_t end = s_.find("?>", pos_);
    if (end == std::string_view::npos) error(start, "the processing instruction is not closed by ?>");
    pos_ = end + 2;
  }

  // <?xml version="1.x" encoding="UTF-8" standalone="..."?>
  void declaration() {
    const std::size_t start = pos_;
    pos_ += 5;
    std::vector<std::pair<std::string, std::string>> pseudo;
    while (true) {
      skip_space();
      if (starts("?>")) {
        pos_ += 2;
        break;
      }
      if (pos_ >= s_.size()) error(start, "the XML declaration is not closed by ?>");
      pseudo.push_back(attribute(pseudo));
    }
    bool has_version = false;
    for (const auto& [key, value] : pseudo) {
      if (key == "version") {
        has_version = true;
        if (!value.starts_with("1.")) error(start, "XML version '" + value + "' is not supported (1.x only)");
      } else if (key == "encoding") {
        std::string lower;
        for (char c : value) lower.push_back(static_cast<char>(c >= 'A' && c <= 'Z' ? c + 32 : c));
        if (lower != "utf-8" && lower != "utf8")
          error(start, "encoding '" + value + "' is not supported (UTF-8 only)");
      } else if (key != "standalone") {
        error(start, "unknown item '" + key + "' in the XML declaration");
      }
    }
    if (!has_version) error(start, "the XML declaration lacks its version");
  }

  std::string name() {
    const std::size_t start = pos_;
    if (pos_ >= s_.size() || !is_name_start(s_[pos_])) error(pos_, "expected a name");
    while (pos_ < s_.size() && is_name_char(s_[pos_])) ++pos_;
    return std::string(s_.substr(start, pos_ - start));
  }

  // name = "value" (or 'value'), entities resolved, white space normalised as XML requires.
  std::pair<std::string, std::string> attribute(const std::vector<std::pair<std::string, std::string>>& earlier) {
    const std::size_t start = pos_;
    std::string key = name();
    for (const auto& a : earlier)
      if (a.first == key) error(start, "attribute '" + key + "' appears twice");
    skip_space();
    if (!starts("=")) error(pos_, "expected '=' after attribute '" + key + "'");
    ++pos_;
    skip_space();
    if (pos_ >= s_.size() || (s_[pos_] != '"' && s_[pos_] != '\''))
      error(pos_, "the value of attribute '" + key + "' must be quoted");
    const char quote = s_[pos_++];
    const std::size_t end = s_.find(quote, pos_);
    if (end == std::string_view::npos) error(start, "the value of attribute '" + key + "' is not closed");
    const std::size_t lt = s_.substr(pos_, end - pos_).find('<');
    if (lt != std::string_view::npos) error(pos_ + lt, "'<' inside the value of attribute '" + key + "'");
    std::string value;
    append_text(value, pos_, end, true);
    pos_ = end + 1;
    return {std::move(key), std::move(value)};
  }

  // Appends s_[from, to) with entities and character references resolved and line ends
  // normalised (CR LF and lone CR become LF; inside attributes tab and line ends become spaces).
  void append_text(std::string& out, std::size_t from, std::size_t to, bool in_attribute) {
    for (std::size_t i = from; i < to; ++i) {
      const char c = s_[i];
      if (c == '&') {
        const std::size_t semi = s_.find(';', i);
        if (semi == std::string_view::npos || semi >= to || semi - i > 12)
          error(i, "'&' must start an entity such as &amp; (ended by ';')");
        const std::string_view ref = s_.substr(i + 1, semi - i - 1);
        if (ref == "lt") out.push_back('<');
        else if (ref == "gt") out.push_back('>');
        else if (ref == "amp") out.push_back('&');
        else if (ref == "quot") out.push_back('"');
        else if (ref == "apos") out.push_back('\'');
        else if (ref.starts_with('#')) out_reference(out, ref, i);
        else error(i, "unknown entity '&" + std::string(ref) + ";' (only &lt; &gt; &amp; &quot; &apos; and character references)");
        i = semi;
      } else if (c == '\r') {
        if (i + 1 < to && s_[i + 1] == '\n') ++i;
        out.push_back(in_attribute ? ' ' : '\n');
      } else if (in_attribute && (c == '\n' || c == '\t')) {
        out.push_back(' ');
      } else {
        if (!in_attribute && c == ']' && s_.substr(i).starts_with("]]>")) error(i, "']]>' is not allowed in text");
        out.push_back(c);
      }
    }
  }

  // &#NNN; or &#xHHH;
  void out_reference(std::string& out, std::string_view ref, std::size_t at) {
    const bool hex = ref.size() > 1 && ref[1] == 'x';
    const std::string_view digits = ref.substr(hex ? 2 : 1);
    if (digits.empty()) error(at, "empty character reference");
    std::uint32_t code = 0;
    for (char d : digits) {
      int v = -1;
      if (d >= '0' && d <= '9') v = d - '0';
      else if (hex && d >= 'a' && d <= 'f') v = d - 'a' + 10;
      else if (hex && d >= 'A' && d <= 'F') v = d - 'A' + 10;
      if (v < 0) error(at, "bad character reference '&" + std::string(ref) + ";'");
      code = code * (hex ? 16u : 10u) + static_cast<std::uint32_t>(v);
      if (code > 0x10FFFF) error(at, "character reference '&" + std::string(ref) + ";' is past U+10FFFF");
    }
    if (!is_xml_char(code)) error(at, "character reference '&" + std::string(ref) + ";' is not an XML character");
    append_utf8(out, code);
  }

  void element(XmlElement& e, std::size_t depth) {
    const std::size_t start = pos_;
    if (depth > limits_.max_depth)
      error(start, "elements are nested more than " + std::to_string(limits_.max_depth) + " deep");
    if (++elements_ > limits_.max_elements)
      error(start, "more than " + std::to_string(limits_.max_elements) + " elements");
    locate(start, e.line, e.column);
    ++pos_;  // '<'
    e.name = name();
    while (true) {
      const std::size_t before = pos_;
      skip_space();
      if (starts("/>")) {
        pos_ += 2;
        return;
      }
      if (starts(">")) {
        ++pos_;
        break;
      }
      if (pos_ >= s_.size()) error(start, "the start tag <" + e.name + "> is not closed");
      if (pos_ == before) error(pos_, "expected white space, '>' or '/>' in the start tag <" + e.name + ">");
      if (e.attributes.size() >= limits_.max_attributes)
        error(pos_, "<" + e.name + "> has more than " + std::to_string(limits_.max_attributes) + " attributes");
      e.attributes.push_back(attribute(e.attributes));
    }
    while (true) {
      const std::size_t lt = s_.find('<', pos_);
      if (lt == std::string_view::npos) error(start, "<" + e.name + "> is never closed");
      append_text(e.text, pos_, lt, false);
      pos_ = lt;
      if (starts("</")) {
        const std::size_t close = pos_;
        pos_ += 2;
        const std::string closing = name();
        if (closing != e.name)
          error(close, "</" + closing + "> does not close <" + e.name + "> (opened at line " + std::to_string(e.line) +
                           ", column " + std::to_string(e.column) + ")");
        skip_space();
        if (!starts(">")) error(pos_, "expected '>' to end </" + closing + ">");
        ++pos_;
        return;
      }
      if (starts("<!--")) {
        comment();
      } else if (starts("<![CDATA[")) {
        const std::size_t end = s_.find("]]>", pos_ + 9);
        if (end == std::string_view::npos) error(pos_, "the CDATA section is not closed by ]]>");
        for (std::size_t i = pos_ + 9; i < end; ++i) {  // kept verbatim but for line ends
          if (s_[i] == '\r') {
            if (i + 1 < end && s_[i + 1] == '\n') ++i;
            e.text.push_back('\n');
          } else {
            e.text.push_back(s_[i]);
          }
        }
        pos_ = end + 3;
      } else if (starts("<?")) {
        instruction();
      } else if (starts("<!")) {
        error(pos_, "markup declarations are not supported inside elements");
      } else {
        e.children.emplace_back();
        element(e.children.back(), depth + 1);
      }
    }
  }
};

}  // namespace

const std::string* XmlElement::attribute(std::string_view key) const {
  for (const auto& [k, v] : attributes)
    if (k == key) return &v;
  return nullptr;
}

std::vector<const XmlElement*> XmlElement::children_named(std::string_view child) const {
  std::vector<const XmlElement*> out;
  for (const auto& c : children)
    if (c.name == child) out.push_back(&c);
  return out;
}

XmlElement parse_xml(std::string_view text, const std::string& source, const XmlLimits& limits) {
  return Parser(text, source, limits).document();
}

bool is_utf8(std::string_view text) {
  for (std::size_t i = 0; i < text.size();) {
    char32_t c = 0;
    const std::size_t n = decode_utf8(text, i, c);
    if (n == 0) return false;
    i += n;
  }
  return true;
}

}  // namespace critplex::io
