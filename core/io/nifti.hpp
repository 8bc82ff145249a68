// NIfTI-1 images (.nii, .nii.gz): a 4-D series and a 3-D integer label image on the same
// grid give one regional mean time series per label. Single-file NIfTI-1 ("n+1") only.
#pragma once

#include <string>

#include "series/series.hpp"

namespace critplex::io {

struct ImageOptions {
  std::string label_names;   // TSV of label index and name ("" = names "label-<index>")
  double sampling_interval = std::numeric_limits<double>::quiet_NaN();  // overrides the header
};

// Regional means: for each label > 0 in ascending order, the mean over its voxels in every
// volume. Sampling interval from pixdim[4] and its time unit unless given. Errors name the
// file: unsupported datatype, not 4-D, mismatched grids, non-integer or negative labels,
// labels listed in the table with no voxels, labels in the image missing from the table.
series::Series read_image_series(const std::string& image_path, const std::string& labels_path,
                                 const ImageOptions& options);

}  // namespace critplex::io
