#include "io/nifti.hpp"

#include <zlib.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <map>
#include <memory>
#include <sstream>
#include <vector>

#include "base/error.hpp"
#include "io/files.hpp"

namespace critplex::io {

namespace {

// gzread reads plain files too, so .nii and .nii.gz share one path and the image is
// streamed one volume at a time instead of being held whole in memory.
struct GzFile {
  gzFile f = nullptr;
  std::string path;
  explicit GzFile(const std::string& p) : path(p) {
    f = gzopen(p.c_str(), "rb");
    if (!f) fail(ErrorKind::io, "cannot open '" + p + "'");
  }
  ~GzFile() {
    if (f) gzclose(f);
  }
  GzFile(const GzFile&) = delete;
  GzFile& operator=(const GzFile&) = delete;
  void read(void* buffer, std::size_t bytes, const std::string& what) {
    auto* out = static_cast<char*>(buffer);
    while (bytes > 0) {
      const unsigned chunk = static_cast<unsigned>(std::min<std::size_t>(bytes, 1u << 30));
      const int got = gzread(f, out, chunk);
      if (got <= 0) {
        int code = 0;
        const char* msg = gzerror(f, &code);
        fail(code == Z_OK || code == Z_STREAM_END ? ErrorKind::parse : ErrorKind::io,
             "'" + path + "': truncated or unreadable while reading " + what +
                 (code != Z_OK && msg ? std::string(" (") + msg + ")" : std::string()));
      }
      out += got;
      bytes -= static_cast<std::size_t>(got);
    }
  }
};

struct Header {
  std::int64_t dim[8] = {};
  double pixdim[8] = {};
  int datatype = 0;
  int bitpix = 0;
  std::int64_t vox_offset = 352;
  double slope = 0.0, intercept = 0.0;
  int xyzt_units = 0;
  int sform_code = 0;
  double srow[3][4] = {};
  bool swap = false;
  std::int64_t spatial_voxels() const { return dim[1] * dim[2] * dim[3]; }
  std::int64_t volumes() const {
    std::int64_t v = 1;
    for (int k = 4; k <= dim[0]; ++k) v *= dim[k];
    return v;
  }
};

template <class T>
T get(const unsigned char* p, bool swap) {
  unsigned char b[sizeof(T)];
  std::memcpy(b, p, sizeof(T));
  if (swap) std::reverse(b, b + sizeof(T));
  T v;
  std::memcpy(&v, b, sizeof(T));
  return v;
}

std::size_t item_size(int datatype) {
  switch (datatype) {
    case 2: case 256: return 1;           // uint8, int8
    case 4: case 512: return 2;           // int16, uint16
    case 8: case 768: case 16: return 4;  // int32, uint32, float32
    case 64: case 1024: case 1280: return 8;  // float64, int64, uint64
    default: return 0;
  }
}

std::string datatype_name(int datatype) {
  switch (datatype) {
    case 32: return "complex64";
    case 128: return "RGB24";
    case 1536: return "float128";
    case 1792: return "complex128";
    case 2048: return "complex256";
    case 2304: return "RGBA32";
    default: return "code " + std::to_string(datatype);
  }
}

Header read_header(GzFile& file) {
  unsigned char h[348];
  file.read(h, sizeof h, "the NIfTI header");
  Header hd;
  std::int32_t size = get<std::int32_t>(h, false);
  if (size != 348) {
    hd.swap = true;
    size = get<std::int32_t>(h, true);
    if (size != 348)
      fail(ErrorKind::parse, "'" + file.path + "' is not a NIfTI-1 image (header size field is not 348)");
  }
  if (std::memcmp(h + 344, "n+1", 4) != 0) {
    if (std::memcmp(h + 344, "ni1", 4) == 0)
      fail(ErrorKind::parse, "'" + file.path + "' is a two-file NIfTI-1 header (.hdr/.img); convert it to a single .nii");
    fail(ErrorKind::parse, "'" + file.path + "' lacks the NIfTI-1 magic \"n+1\"");
  }
  for (int k = 0; k < 8; ++k) hd.dim[k] = get<std::int16_t>(h + 40 + 2 * k, hd.swap);
  if (hd.dim[0] < 1 || hd.dim[0] > 7) fail(ErrorKind::parse, "'" + file.path + "': dim[0] = " + std::to_string(hd.dim[0]) + " is not 1..7");
  for (int k = 1; k <= 7; ++k) {
    if (k > hd.dim[0]) hd.dim[k] = 1;
    if (hd.dim[k] < 1) fail(ErrorKind::parse, "'" + file.path + "': dim[" + std::to_string(k) + "] = " + std::to_string(hd.dim[k]) + " is not positive");
  }
  hd.datatype = get<std::int16_t>(h + 70, hd.swap);
  hd.bitpix = get<std::int16_t>(h + 72, hd.swap);
  for (int k = 0; k < 8; ++k) hd.pixdim[k] = get<float>(h + 76 + 4 * k, hd.swap);
  const double offset = get<float>(h + 108, hd.swap);
  hd.vox_offset = static_cast<std::int64_t>(offset);
  if (hd.vox_offset < 352) hd.vox_offset = 352;
  hd.slope = get<float>(h + 112, hd.swap);
  hd.intercept = get<float>(h + 116, hd.swap);
  hd.xyzt_units = h[123];
  hd.sform_code = get<std::int16_t>(h + 254, hd.swap);
  for (int r = 0; r < 3; ++r)
    for (int c = 0; c < 4; ++c) hd.srow[r][c] = get<float>(h + 280 + 16 * r + 4 * c, hd.swap);  // srow_x, srow_y, srow_z
  if (item_size(hd.datatype) == 0)
    fail(ErrorKind::data, "'" + file.path + "': NIfTI datatype " + datatype_name(hd.datatype) +
                              " is not supported (use an integer or float32/float64 image)");
  // Skip the extensions up to the first voxel.
  std::vector<char> skip(static_cast<std::size_t>(hd.vox_offset - 348));
  if (!skip.empty()) file.read(skip.data(), skip.size(), "the NIfTI extensions");
  return hd;
}

// Converts `count` stored values to doubles, applying the header's scaling.
void decode(const Header& hd, const unsigned char* raw, std::size_t count, double* out) {
  const std::size_t sz = item_size(hd.datatype);
  for (std::size_t i = 0; i < count; ++i) {
    const unsigned char* p = raw + i * sz;
    double v = 0;
    switch (hd.datatype) {
      case 2: v = p[0]; break;
      case 256: v = static_cast<std::int8_t>(p[0]); break;
      case 4: v = get<std::int16_t>(p, hd.swap); break;
      case 512: v = get<std::uint16_t>(p, hd.swap); break;
      case 8: v = get<std::int32_t>(p, hd.swap); break;
      case 768: v = get<std::uint32_t>(p, hd.swap); break;
      case 16: v = get<float>(p, hd.swap); break;
      case 64: v = get<double>(p, hd.swap); break;
      case 1024: v = static_cast<double>(get<std::int64_t>(p, hd.swap)); break;
      case 1280: v = static_cast<double>(get<std::uint64_t>(p, hd.swap)); break;
    }
    out[i] = v;
  }
  // NIfTI-1: scl_slope 0 means "no scaling".
  if (hd.slope != 0.0 && !(hd.slope == 1.0 && hd.intercept == 0.0))
    for (std::size_t i = 0; i < count; ++i) out[i] = hd.slope * out[i] + hd.intercept;
}

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

std::map<long long, std::string> read_label_names(const std::string& path) {
  const std::string bytes = read_file(path);
  std::map<long long, std::string> names;
  std::istringstream in(bytes);
  std::string line;
  std::size_t number = 0;
  int index_col = 0, name_col = 1;
  bool first = true;
  while (std::getline(in, line)) {
    ++number;
    if (!line.empty() && line.back() == '\r') line.pop_back();
    if (line.find_first_not_of(" \t") == std::string::npos || line[0] == '#') continue;
    std::vector<std::string> cells;
    std::size_t start = 0;
    while (true) {
      const auto tab = line.find('\t', start);
      cells.push_back(line.substr(start, tab == std::string::npos ? std::string::npos : tab - start));
      if (tab == std::string::npos) break;
      start = tab + 1;
    }
    auto is_integer = [](const std::string& s) {
      if (s.empty()) return false;
      std::size_t k = (s[0] == '-' || s[0] == '+') ? 1 : 0;
      if (k == s.size()) return false;
      for (; k < s.size(); ++k)
        if (s[k] < '0' || s[k] > '9') return false;
      return true;
    };
    if (first) {
      first = false;
      if (!is_integer(cells[0])) {
        // A header row; a BIDS-style table names its columns "index" and "name".
        auto idx = std::find(cells.begin(), cells.end(), "index");
        auto nm = std::find(cells.begin(), cells.end(), "name");
        if (idx != cells.end() && nm != cells.end()) {
          index_col = static_cast<int>(idx - cells.begin());
          name_col = static_cast<int>(nm - cells.begin());
        }
        continue;
      }
    }
    const auto need = static_cast<std::size_t>(std::max(index_col, name_col)) + 1;
    if (cells.size() < need)
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(number) + ": expected a label index and a name separated by a tab");
    const std::string& idx = cells[static_cast<std::size_t>(index_col)];
    if (!is_integer(idx))
      fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(number) + ": label index '" + idx + "' is not an integer");
    const long long k = std::stoll(idx);
    if (k <= 0) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(number) + ": label index must be positive (0 is background)");
    if (names.count(k)) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(number) + ": label " + idx + " listed twice");
    const std::string& name = cells[static_cast<std::size_t>(name_col)];
    if (name.empty()) fail(ErrorKind::parse, "'" + path + "', line " + std::to_string(number) + ": empty name for label " + idx);
    names[k] = name;
  }
  if (names.empty()) fail(ErrorKind::parse, "'" + path + "' lists no labels");
  return names;
}

}  // namespace

series::Series read_image_series(const std::string& image_path, const std::string& labels_path,
                                 const ImageOptions& options) {
  // Labels first: they are small and most mistakes show up there.
  GzFile lf(labels_path);
  const Header lh = read_header(lf);
  if (lh.volumes() != 1)
    fail(ErrorKind::data, "'" + labels_path + "': a label image must be 3-D, it has " + std::to_string(lh.volumes()) + " volumes");
  const auto voxels = static_cast<std::size_t>(lh.spatial_voxels());
  std::vector<double> label_values(voxels);
  {
    std::vector<unsigned char> raw(voxels * item_size(lh.datatype));
    lf.read(raw.data(), raw.size(), "the label voxels");
    decode(lh, raw.data(), voxels, label_values.data());
  }
  std::map<long long, std::size_t> voxel_count;
  for (std::size_t v = 0; v < voxels; ++v) {
    const double x = label_values[v];
    if (!std::isfinite(x) || x != std::floor(x))
      fail(ErrorKind::data, "'" + labels_path + "': voxel " + std::to_string(v) + " holds " + format_double(x) +
                                ", not an integer label");
    if (x < 0) fail(ErrorKind::data, "'" + labels_path + "': voxel " + std::to_string(v) + " holds the negative label " + format_double(x));
    if (x > 0) ++voxel_count[static_cast<long long>(x)];
  }
  if (voxel_count.empty()) fail(ErrorKind::data, "'" + labels_path + "' has no labelled voxels (all 0)");

  GzFile img(image_path);
  const Header ih = read_header(img);
  if (ih.dim[0] < 4 || ih.volumes() < 2)
    fail(ErrorKind::data, "'" + image_path + "' is not a 4-D series (it has " + std::to_string(ih.volumes()) + " volume(s))");
  for (int k = 1; k <= 3; ++k) {
    if (ih.dim[k] != lh.dim[k])
      fail(ErrorKind::data, "grids differ: '" + image_path + "' is " + std::to_string(ih.dim[1]) + "x" + std::to_string(ih.dim[2]) +
                                "x" + std::to_string(ih.dim[3]) + " voxels but '" + labels_path + "' is " +
                                std::to_string(lh.dim[1]) + "x" + std::to_string(lh.dim[2]) + "x" + std::to_string(lh.dim[3]));
    if (std::fabs(ih.pixdim[k] - lh.pixdim[k]) > 1e-4 * std::max(1.0, std::fabs(ih.pixdim[k])))
      fail(ErrorKind::data, "grids differ: voxel size " + std::to_string(k) + " is " + format_double(ih.pixdim[k]) + " in '" +
                                image_path + "' but " + format_double(lh.pixdim[k]) + " in '" + labels_path + "'");
  }
  if (ih.sform_code > 0 && lh.sform_code > 0)
    for (int r = 0; r < 3; ++r)
      for (int c = 0; c < 4; ++c)
        if (std::fabs(ih.srow[r][c] - lh.srow[r][c]) > 1e-3)
          fail(ErrorKind::data, "grids differ: the voxel-to-world transforms (sform) of '" + image_path + "' and '" +
                                    labels_path + "' do not match");

  std::map<long long, std::string> names;
  if (!labels_path.empty() && !options.label_names.empty()) {
    names = read_label_names(options.label_names);
    for (const auto& [k, n] : names)
      if (!voxel_count.count(k))
        fail(ErrorKind::data, "label " + std::to_string(k) + " ('" + n + "') of '" + options.label_names +
                                  "' has no voxels in '" + labels_path + "'");
    for (const auto& [k, c] : voxel_count)
      if (!names.count(k))
        fail(ErrorKind::data, "label " + std::to_string(k) + " (" + std::to_string(c) + " voxels in '" + labels_path +
                                  "') is missing from '" + options.label_names + "'");
  }

  // Column of each voxel (-1 for background).
  std::map<long long, Eigen::Index> column;
  series::Series s;
  for (const auto& [k, c] : voxel_count) {
    column[k] = static_cast<Eigen::Index>(s.names.size());
    s.names.push_back(names.empty() ? "label-" + std::to_string(k) : names[k]);
  }
  std::vector<Eigen::Index> voxel_column(voxels, -1);
  Eigen::VectorXd count(static_cast<Eigen::Index>(voxel_count.size()));
  for (const auto& [k, c] : voxel_count) count(column[k]) = static_cast<double>(c);
  for (std::size_t v = 0; v < voxels; ++v)
    if (label_values[v] > 0) voxel_column[v] = column[static_cast<long long>(label_values[v])];

  const Eigen::Index T = ih.volumes();
  s.values.setZero(T, static_cast<Eigen::Index>(voxel_count.size()));
  std::vector<unsigned char> raw(voxels * item_size(ih.datatype));
  std::vector<double> volume(voxels);
  for (Eigen::Index t = 0; t < T; ++t) {
    img.read(raw.data(), raw.size(), "volume " + std::to_string(t + 1));
    decode(ih, raw.data(), voxels, volume.data());
    for (std::size_t v = 0; v < voxels; ++v)
      if (voxel_column[v] >= 0) s.values(t, voxel_column[v]) += volume[v];
  }
  for (Eigen::Index j = 0; j < s.values.cols(); ++j) s.values.col(j) /= count(j);

  const double unit = time_unit_seconds(ih.xyzt_units);
  if (std::isfinite(options.sampling_interval)) s.sampling_interval = options.sampling_interval;
  else if (std::isfinite(unit) && ih.pixdim[4] > 0) s.sampling_interval = ih.pixdim[4] * unit;
  s.source = image_path;
  series::validate(s);
  return s;
}

}  // namespace critplex::io
