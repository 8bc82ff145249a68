// A methods paragraph a user can paste into a paper, generated from a comparison's
// resolved configuration (the provenance document), with the references of every
// method it names. Shown in the report and written as methods.md beside it.
#pragma once

#include <string>
#include <vector>

#include "pipeline/compare.hpp"

namespace critplex::pipeline {

struct MethodsText {
  std::vector<std::string> paragraphs;
  std::vector<std::string> references;  // in order of first mention, each once
};

MethodsText methods_text(const Comparison& comparison);
// Markdown: a heading, the paragraphs, the references as a list, and the caution.
std::string methods_markdown(const MethodsText& text);

}  // namespace critplex::pipeline
