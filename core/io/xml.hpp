// A small, strict XML reader for the subset that CIFTI-2 headers use: elements,
// attributes, character data, the five predefined entities and character references,
// comments, CDATA sections and processing instructions. No DTD (a DOCTYPE is refused, so
// no entity can expand), no namespaces (a prefix stays part of the name), UTF-8 only.
// Limits on size, depth, elements and attributes keep a hostile header from costing more
// than a small multiple of its own size.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace critplex::io {

struct XmlElement {
  std::string name;
  std::vector<std::pair<std::string, std::string>> attributes;  // in document order
  std::string text;                  // character data directly inside (entities resolved, CDATA kept)
  std::vector<XmlElement> children;  // child elements in document order
  std::size_t line = 0, column = 0;  // where the start tag begins (1-based; columns count characters)

  // The attribute's value, or nullptr when it is absent.
  const std::string* attribute(std::string_view key) const;
  // Direct children with this name, in document order.
  std::vector<const XmlElement*> children_named(std::string_view child) const;
};

struct XmlLimits {
  std::size_t max_bytes = std::size_t{64} << 20;  // document size
  std::size_t max_depth = 32;                     // nesting of elements
  std::size_t max_elements = 200000;              // elements in the whole document
  std::size_t max_attributes = 64;                // attributes of one element
};

// Parses `text` into its root element. Errors are ErrorKind::parse and read
// "<source>: XML line L, column C: <what>".
XmlElement parse_xml(std::string_view text, const std::string& source, const XmlLimits& limits = {});

// True when `text` is well-formed UTF-8 (no overlong forms, surrogates or values past U+10FFFF).
bool is_utf8(std::string_view text);

}  // namespace critplex::io
