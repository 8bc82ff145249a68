#include "io/nifti.hpp"

#include <sys/stat.h>

#include <algorithm>
#include <charconv>
#include <cmath>
#include <sstream>
#include <vector>

#include "base/error.hpp"
#include "io/cifti.hpp"
#include "io/files.hpp"
#include "io/image_file.hpp"
#include "io/xml.hpp"

namespace critplex::io {

namespace {

// Seconds per unit of pixdim[4] from xyzt_units; NaN when the unit is not a time.
double time_unit_seconds(int xyzt_units) {
  switch (xyzt_units & 0x38) {
    case 0: return 1.0;  // unknown: seconds, as fMRI headers without units usually mean
    case 8: return 1.0;
    case 16: return 1e-3;
    case 24: return 1e-6;
    default: return std::numeric_limits<double>::quiet_NaN();
  }
}

std::string voxel_name(const ImageHeader& h, std::int64_t v) {
  return "voxel (" + std::to_string(v % h.dim[1]) + ", " + std::to_string(v / h.dim[1] % h.dim[2]) + ", " +
         std::to_string(v / h.dim[1] / h.dim[2]) + ")";
}

void check_same_grid(const ImageFile& image, const ImageFile& labels) {
  const ImageHeader& ih = image.header();
  const ImageHeader& lh = labels.header();
  const std::string& a = image.path();
  const std::string& b = labels.path();
  for (int k = 1; k <= 3; ++k) {
    if (ih.dim[k] != lh.dim[k])
      fail(ErrorKind::data, "grids differ: '" + a + "' is " + std::to_string(ih.dim[1]) + "x" + std::to_string(ih.dim[2]) + "x" +
                                std::to_string(ih.dim[3]) + " voxels but '" + b + "' is " + std::to_string(lh.dim[1]) + "x" +
                                std::to_string(lh.dim[2]) + "x" + std::to_string(lh.dim[3]));
    for (const ImageFile* f : {&image, &labels})
      if (!std::isfinite(f->header().pixdim[k]))
        fail(ErrorKind::parse, "'" + f->path() + "': header field pixdim[" + std::to_string(k) + "] is not a finite number");
    if (std::fabs(ih.pixdim[k] - lh.pixdim[k]) > 1e-4 * std::max(1.0, std::fabs(ih.pixdim[k])))
      fail(ErrorKind::data, "grids differ: voxel size " + std::to_string(k) + " is " + format_double(ih.pixdim[k]) + " in '" + a +
                                "' but " + format_double(lh.pixdim[k]) + " in '" + b + "'");
  }
  if (ih.sform_code > 0 && lh.sform_code > 0)
    for (int r = 0; r < 3; ++r)
      for (int c = 0; c < 4; ++c)
        if (!(std::fabs(ih.srow[r][c] - lh.srow[r][c]) <= 1e-3))  // also refuses NaN
          fail(ErrorKind::data, "grids differ: the voxel-to-world transforms (sform) of '" + a + "' and '" + b + "' do not match");
}

// A 4-D NIfTI image and a 3-D label image on the same grid.
series::Series read_volume_series(ImageFile& image, const std::string& labels_path, const ImageOptions& options,
                                  MemoryBudget& budget) {
  const ImageHeader& ih = image.header();
  if (ih.dim[0] < 4 || ih.frames() < 2)
    fail(ErrorKind::data, "'" + image.path() + "' is not a 4-D series (it has " + std::to_string(ih.frames()) + " volume(s))");
  ImageFile labels(labels_path, budget);
  if (labels.cifti_xml())
    fail(ErrorKind::data, "'" + labels_path + "' is a CIFTI file; the NIfTI image '" + image.path() +
                              "' needs a 3-D label image on its grid");
  const ImageHeader& lh = labels.header();
  if (lh.frames() != 1)
    fail(ErrorKind::data, "'" + labels_path + "': a label image must be 3-D, it has " + std::to_string(lh.frames()) + " volumes");
  check_same_grid(image, labels);

  // Voxels become runs of one label; columns are numbered as labels first appear.
  const std::int64_t voxels = lh.spatial();
  PlaceRuns runs(budget, labels_path);
  std::map<std::int64_t, std::int64_t> column_of;
  std::vector<std::int64_t> chunk(ImageFile::chunk_values);
  for (std::int64_t v0 = 0; v0 < voxels;) {
    const auto n = std::min<std::int64_t>(ImageFile::chunk_values, voxels - v0);
    labels.read_labels(chunk.data(), static_cast<std::size_t>(n),
                       [&](std::size_t k) { return voxel_name(lh, v0 + static_cast<std::int64_t>(k)); });
    for (std::int64_t i = 0; i < n; ++i) {
      const std::int64_t k = chunk[static_cast<std::size_t>(i)];
      if (k == 0) continue;
      runs.add(v0 + i, column_of.emplace(k, static_cast<std::int64_t>(column_of.size())).first->second);
    }
    v0 += n;
  }
  if (column_of.empty()) fail(ErrorKind::data, "'" + labels_path + "' has no labelled voxels (all 0)");
  const auto label_list = order_columns_by_label(column_of, runs);
  const auto voxel_count = runs.places_per_column(static_cast<std::int64_t>(label_list.size()));

  std::vector<std::string> names;
  if (!options.label_names.empty()) {
    const auto table = read_label_table(options.label_names);
    for (const auto& [k, n] : table)
      if (!column_of.count(k))
        fail(ErrorKind::data, "label " + std::to_string(k) + " (" + excerpt(n) + ") of '" + options.label_names +
                                  "' has no voxels in '" + labels_path + "'");
    for (std::size_t c = 0; c < label_list.size(); ++c)
      if (!table.count(label_list[c]))
        fail(ErrorKind::data, "label " + std::to_string(label_list[c]) + " (" + std::to_string(voxel_count[c]) +
                                  " voxels in '" + labels_path + "') is missing from '" + options.label_names + "'");
    names = region_names(label_list, &table, options.label_names);
  } else {
    names = region_names(label_list, nullptr, labels_path);
  }

  series::Series s;
  s.values = column_means(image, ih.frames(), voxels, false, runs, static_cast<std::int64_t>(names.size()), budget);
  s.names = std::move(names);
  const double unit = time_unit_seconds(ih.xyzt_units);
  if (std::isfinite(options.sampling_interval)) s.sampling_interval = options.sampling_interval;
  else if (std::isfinite(unit) && std::isfinite(ih.pixdim[4]) && ih.pixdim[4] > 0) s.sampling_interval = ih.pixdim[4] * unit;
  s.source = image.path();
  return s;
}

bool is_integer_text(const std::string& s) {
  if (s.empty()) return false;
  std::size_t k = (s[0] == '-' || s[0] == '+') ? 1 : 0;
  if (k == s.size()) return false;
  for (; k < s.size(); ++k)
    if (s[k] < '0' || s[k] > '9') return false;
  return true;
}

}  // namespace

std::map<std::int64_t, std::string> read_label_table(const std::string& path) {
  struct stat st {};
  if (::stat(path.c_str(), &st) == 0 && S_ISREG(st.st_mode) && st.st_size > (std::int64_t{64} << 20))
    fail(ErrorKind::data, "'" + path + "' has " + std::to_string(st.st_size) + " bytes; a label table may have at most 64 MiB");
  const std::string bytes = read_file(path);
  std::map<std::int64_t, std::string> names;
  std::istringstream in(bytes);
  std::string line;
  std::size_t number = 0;
  std::size_t index_col = 0, name_col = 1;
  bool first = true;
  while (std::getline(in, line)) {
    ++number;
    const std::string at = "'" + path + "', line " + std::to_string(number);
    if (number == 1 && line.starts_with("\xEF\xBB\xBF")) line.erase(0, 3);  // byte-order mark
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.find_first_not_of(" \t") == std::string::npos || line[0] == '#') continue;
    if (!is_utf8(line)) fail(ErrorKind::parse, at + ": not valid UTF-8");
    std::vector<std::string> cells;
    std::size_t start = 0;
    while (true) {
      const auto tab = line.find('\t', start);
      cells.push_back(line.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
      if (tab == std::string::npos) break;
      start = tab + 1;
    }
    if (first) {
      first = false;
      if (!is_integer_text(cells[0])) {
        // A header row; a BIDS-style table names its columns "index" and "name".
        const auto idx = std::find(cells.begin(), cells.end(), "index");
        const auto nm = std::find(cells.begin(), cells.end(), "name");
        if (idx != cells.end() && nm != cells.end()) {
          index_col = static_cast<std::size_t>(idx - cells.begin());
          name_col = static_cast<std::size_t>(nm - cells.begin());
        }
        continue;
      }
    }
    if (cells.size() < std::max(index_col, name_col) + 1)
      fail(ErrorKind::parse, at + ": expected a label index and a name separated by a tab");
    const std::string& idx = cells[index_col];
    std::int64_t k = 0;
    const char* begin = idx.data() + (idx.starts_with('+') ? 1 : 0);
    const auto [end, ec] = std::from_chars(begin, idx.data() + idx.size(), k);
    if (!is_integer_text(idx) || ec != std::errc() || end != idx.data() + idx.size() || k > (std::int64_t{1} << 53))
      fail(ErrorKind::parse, at + ": label index " + excerpt(idx) + " is not a whole number from 1 to 2^53");
    if (k <= 0) fail(ErrorKind::parse, at + ": label index must be positive (0 is background)");
    if (names.count(k)) fail(ErrorKind::parse, at + ": label " + idx + " listed twice");
    const std::string& name = cells[name_col];
    if (name.empty()) fail(ErrorKind::parse, at + ": empty name for label " + idx);
    check_region_name(name, at);
    names[k] = name;
  }
  if (names.empty()) fail(ErrorKind::parse, "'" + path + "' lists no labels");
  return names;
}

series::Series read_image_series(const std::string& image_path, const std::string& labels_path,
                                 const ImageOptions& options) {
  MemoryBudget budget(options.memory_budget);
  ImageFile image(image_path, budget);
  series::Series s;
  if (image.cifti_xml()) {
    const CiftiHeader header = read_cifti_header(image, budget);
    s = read_cifti_series(image, header, labels_path, options, budget);
  } else {
    if (labels_path.empty())
      fail(ErrorKind::argument, "'" + image_path + "' is a NIfTI-" + std::to_string(image.header().version) +
                                    " image: its regions need a label image on the same grid, and none was given");
    if (!options.label_map.empty())
      fail(ErrorKind::argument, "option \"label_map\" applies to CIFTI label files, not to the NIfTI image '" + image_path + "'");
    s = read_volume_series(image, labels_path, options, budget);
  }
  series::validate(s);
  return s;
}

ImageHeaderSummary read_image_header_summary(const std::string& image_path) {
  MemoryBudget budget(default_image_memory_budget);
  ImageFile image(image_path, budget);
  ImageHeaderSummary summary;
  if (image.cifti_xml()) {
    summary.cifti = true;
    const CiftiHeader header = read_cifti_header(image, budget);
    for (const auto& axis : header.axes)
      if (axis.kind == CiftiAxis::Kind::series && axis.unit == "SECOND" && std::isfinite(axis.step) && axis.step > 0)
        summary.sampling_interval = axis.step;
    return summary;
  }
  const ImageHeader& h = image.header();
  summary.grid = {h.dim[1], h.dim[2], h.dim[3]};
  const double unit = time_unit_seconds(h.xyzt_units);
  if (h.dim[0] >= 4 && std::isfinite(unit) && std::isfinite(h.pixdim[4]) && h.pixdim[4] > 0)
    summary.sampling_interval = h.pixdim[4] * unit;
  return summary;
}

}  // namespace critplex::io
