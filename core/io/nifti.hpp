// Regional time series from images: NIfTI-1 and NIfTI-2 (.nii, .nii.gz) 4-D series with a
// 3-D integer label image on the same grid, CIFTI-2 dense series (.dtseries.nii) with a
// dense label file (.dlabel.nii, or a dense file of integer labels such as a .dscalar.nii),
// and CIFTI-2 parcellated series (.ptseries.nii), whose parcels are the regions.
// Single-file images only. Headers are checked before anything is allocated (see
// image_file.hpp for the size rules and the memory budget).
#pragma once

#include <array>
#include <cstdint>
#include <limits>
#include <map>
#include <string>

#include "base/option_schema.hpp"

#include "series/series.hpp"

namespace critplex::io {

struct ImageOptions {
  std::string label_names;   // TSV of label index and name ("" = names from the atlas, else "label-<index>")
  double sampling_interval = std::numeric_limits<double>::quiet_NaN();  // overrides the file
  std::string label_map;     // which map of a CIFTI label file: its name or 1-based number ("" = the only one)
  std::uint64_t memory_budget = std::uint64_t{1} << 30;  // bytes the reader may hold (default_image_memory_budget)
};

// Regional means: for each label > 0 in ascending order, the mean over its voxels (or
// brainordinates) in every frame; for a parcellated series, the parcels in file order
// (labels_path must be empty). Sampling interval from pixdim[4] and its time unit (NIfTI)
// or from SeriesStep x 10^SeriesExponent in SECOND (CIFTI), unless given. Errors name the
// file and the field or element: unsupported datatypes, sizes that do not fit the file or
// the budget, mismatched grids or brainordinates, labels that are not whole numbers from 0
// to 2^53, labels listed in the table with no voxels, labels missing from the table.
series::Series read_image_series(const std::string& image_path, const std::string& labels_path,
                                 const ImageOptions& options);

// What an image's header says, read without the data (and, for CIFTI, with the XML):
// sampling_interval in seconds (NIfTI pixdim[4] with its time unit, CIFTI SeriesStep in
// SECOND; NaN when the header states none) and, for NIfTI volumes, the spatial grid.
struct ImageHeaderSummary {
  bool cifti = false;
  std::array<std::int64_t, 3> grid{};  // NIfTI: dim[1..3]; CIFTI: zeros
  double sampling_interval = std::numeric_limits<double>::quiet_NaN();
};
ImageHeaderSummary read_image_header_summary(const std::string& image_path);

// The image reading options (label_names, sampling_interval, label_map, memory_budget_mb)
// and their table.
const OptionSection& image_option_section();
ImageOptions parse_image_options(const Json& options, const std::string& where);

// A TSV of label index and name (optional header row; a BIDS-style header names the
// columns "index" and "name"). Indices are whole numbers from 1 to 2^53; names are
// non-empty, unique UTF-8 without control characters.
std::map<std::int64_t, std::string> read_label_table(const std::string& path);

}  // namespace critplex::io
