#include "base/error.hpp"
#include "base/option_schema.hpp"
#include "io/image_file.hpp"
#include "io/nifti.hpp"

namespace critplex::io {

const OptionSection& image_option_section() {
  static const OptionSection section{
      "image",
      "image options",
      "cpx_series_read_image, critplex connect IMAGE, the subject config's \"read\" for images",
      "Regional mean series from a 4-D NIfTI-1/2 image or a CIFTI-2 series and its atlas.",
      {{.key = "label_names", .type = "string", .meaning = "a TSV of label index and name"},
       {.key = "sampling_interval", .type = "number", .default_note = "from the file", .min = 0, .min_open = true,
        .meaning = "seconds between frames; overrides the image header or the CIFTI series axis"},
       {.key = "label_map", .type = "string or integer", .default_note = "the only map",
        .meaning = "which map of a CIFTI label file: its name, or its number from 1"},
       {.key = "memory_budget_mb", .type = "integer", .default_value = static_cast<long long>(default_image_memory_budget >> 20),
        .min = 1, .max = 1048576,
        .meaning = "MiB the reader may hold; sizes declared by a file beyond it are refused before any allocation"}}};
  return section;
}

ImageOptions parse_image_options(const Json& options, const std::string& where) {
  SchemaReader r(options, image_option_section(), where);
  ImageOptions o;
  o.label_names = r.text("label_names");
  if (auto dt = r.optional_number("sampling_interval")) o.sampling_interval = *dt;
  // A map of a CIFTI label file by name, or by number from 1 (JSON number or text).
  if (const Json* map = r.raw("label_map")) {
    if (map->is_string()) o.label_map = map->get<std::string>();
    else if (map->is_number_integer() && map->get<long long>() >= 1) o.label_map = std::to_string(map->get<long long>());
    else r.bad("label_map", "a map name or a number from 1");
  }
  o.memory_budget = static_cast<std::uint64_t>(r.integer("memory_budget_mb")) << 20;
  r.finish();
  return o;
}

}  // namespace critplex::io
