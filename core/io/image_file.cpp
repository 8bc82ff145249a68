#include "io/image_file.hpp"

#include <sys/stat.h>

#include <algorithm>
#include <cmath>
#include <cstring>

#include "base/error.hpp"
#include "io/files.hpp"
#include "io/xml.hpp"

namespace critplex::io {

namespace {

constexpr std::int64_t max_count = std::int64_t{1} << 62;            // any count or byte size from a header
constexpr double max_label = 9007199254740992.0;                     // 2^53
constexpr std::uint64_t max_cifti_text = std::uint64_t{64} << 20;    // bytes of CIFTI XML kept

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
    case 2: case 256: return 1;               // uint8, int8
    case 4: case 512: return 2;               // int16, uint16
    case 8: case 768: case 16: return 4;      // int32, uint32, float32
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

// A stored value as a double (no scaling). Integer types of 64 bits round to the nearest
// double, as every reader of these files does.
double stored_value(const unsigned char* p, int datatype, bool swap) {
  switch (datatype) {
    case 2: return p[0];
    case 256: return static_cast<std::int8_t>(p[0]);
    case 4: return get<std::int16_t>(p, swap);
    case 512: return get<std::uint16_t>(p, swap);
    case 8: return get<std::int32_t>(p, swap);
    case 768: return get<std::uint32_t>(p, swap);
    case 16: return get<float>(p, swap);
    case 64: return get<double>(p, swap);
    case 1024: return static_cast<double>(get<std::int64_t>(p, swap));
    case 1280: return static_cast<double>(get<std::uint64_t>(p, swap));
    default: return 0.0;
  }
}

bool is_whole(double x) { return std::isfinite(x) && x == std::floor(x); }

}  // namespace

void MemoryBudget::take(std::uint64_t bytes, const std::string& what) {
  if (bytes > limit_ || used_ > limit_ - bytes) {
    auto mib = [](std::uint64_t b) { return std::to_string((b + (1u << 20) - 1) >> 20); };
    fail(ErrorKind::budget, what + " would take " + mib(bytes) + " MiB, past the image memory budget of " +
                                mib(limit_) + " MiB (option \"memory_budget_mb\" raises it)");
  }
  used_ += bytes;
}

std::string excerpt(const std::string& text, std::size_t limit) {
  if (text.size() <= limit) return "'" + text + "'";
  std::size_t cut = limit;
  while (cut > 0 && (static_cast<unsigned char>(text[cut]) & 0xC0) == 0x80) --cut;  // keep whole characters
  return "'" + text.substr(0, cut) + "...' (" + std::to_string(text.size()) + " bytes)";
}

void check_region_name(const std::string& name, const std::string& where) {
  if (name.empty()) fail(ErrorKind::data, where + ": the region name is empty");
  if (name.size() > 256) fail(ErrorKind::data, where + ": the region name " + excerpt(name) + " is longer than 256 bytes");
  if (!is_utf8(name)) fail(ErrorKind::data, where + ": the region name is not valid UTF-8");
  for (char c : name)
    if (static_cast<unsigned char>(c) < 0x20 || c == 0x7F)
      fail(ErrorKind::data, where + ": the region name " + excerpt(name) + " holds a control character (tab, line end, ...)");
}

std::int64_t checked_product(std::int64_t a, std::int64_t b, const std::string& what) {
  std::int64_t p = 0;
  if (a < 0 || b < 0 || __builtin_mul_overflow(a, b, &p) || p > max_count)
    fail(ErrorKind::parse, what + " is too large (" + std::to_string(a) + " x " + std::to_string(b) + " passes 2^62)");
  return p;
}

ImageFile::ImageFile(const std::string& path, MemoryBudget& budget) : path_(path) {
  struct stat st {};
  const bool exists = ::stat(path.c_str(), &st) == 0;
  if (exists && S_ISDIR(st.st_mode)) fail(ErrorKind::io, "'" + path + "' is a folder, not an image file");
  owner_.reset(gzopen(path.c_str(), "rb"));
  file_ = owner_.get();
  if (!file_) fail(ErrorKind::io, "cannot open '" + path + "'" + (exists ? "" : " (no such file)"));
  gzbuffer(file_, 1u << 16);
  read_header();
  // gzdirect says, after the first read, whether the file is plain (so its size is real).
  const bool size_known = exists && S_ISREG(st.st_mode) && gzdirect(file_) == 1;
  const auto file_size = static_cast<std::uint64_t>(exists ? st.st_size : 0);
  const std::int64_t data_bytes = checked_product(header_.values, static_cast<std::int64_t>(header_.item_bytes),
                                                  "'" + path + "': the data size declared by the header");
  if (header_.vox_offset > max_count - data_bytes)
    bad("vox_offset", "vox_offset " + std::to_string(header_.vox_offset) + " plus the data size passes 2^62");
  if (size_known && static_cast<std::uint64_t>(header_.vox_offset + data_bytes) > file_size) {
    std::string shape;
    for (int k = 1; k <= header_.dim[0]; ++k) shape += (k > 1 ? "x" : "") + std::to_string(header_.dim[k]);
    bad("dim and vox_offset", "the header declares " + shape + " values of " + std::to_string(header_.item_bytes) + " bytes (" +
                   std::to_string(data_bytes) + " bytes from byte " + std::to_string(header_.vox_offset) +
                   "), but the file has " + std::to_string(file_size) + " bytes");
  }
  read_extensions(budget);
  raw_.resize(chunk_values * header_.item_bytes);
}

void ImageFile::bad(const std::string& field, const std::string& problem) const {
  fail(ErrorKind::parse, "'" + path_ + "': NIfTI-" + std::to_string(header_.version) + " header field" +
                             (field.find(" and ") == std::string::npos ? " " : "s ") + field + ": " + problem);
}

void ImageFile::read_bytes(void* out, std::size_t bytes, const std::string& what) {
  auto* to = static_cast<char*>(out);
  while (bytes > 0) {
    const auto chunk = static_cast<unsigned>(std::min<std::size_t>(bytes, 1u << 30));
    const int got = gzread(file_, to, chunk);
    if (got <= 0) {
      int code = 0;
      const char* msg = gzerror(file_, &code);
      const bool damaged = code != Z_OK && code != Z_STREAM_END;
      fail(damaged && code != Z_DATA_ERROR ? ErrorKind::io : ErrorKind::parse,
           "'" + path_ + "': the file ends inside " + what + (damaged && msg ? std::string(" (") + msg + ")" : " (truncated?)"));
    }
    to += got;
    bytes -= static_cast<std::size_t>(got);
  }
}

void ImageFile::skip_bytes(std::uint64_t bytes, const std::string& what) {
  unsigned char sink[4096];
  while (bytes > 0) {
    const auto n = static_cast<std::size_t>(std::min<std::uint64_t>(bytes, sizeof sink));
    read_bytes(sink, n, what);
    bytes -= n;
  }
}

void ImageFile::read_header() {
  unsigned char h[540] = {};
  read_bytes(h, 4, "the NIfTI header");
  const std::int32_t native = get<std::int32_t>(h, false), swapped = get<std::int32_t>(h, true);
  ImageHeader& hd = header_;
  if (native == 348 || swapped == 348) hd.version = 1;
  else if (native == 540 || swapped == 540) hd.version = 2;
  else fail(ErrorKind::parse, "'" + path_ + "' is not a NIfTI image (its header size field is neither 348 nor 540)");
  hd.swap = native != 348 && native != 540;
  const std::size_t size = hd.version == 1 ? 348 : 540;
  read_bytes(h + 4, size - 4, "the NIfTI header");
  const bool s = hd.swap;
  std::int64_t vox_offset = 0;
  if (hd.version == 1) {
    if (std::memcmp(h + 344, "ni1", 4) == 0)
      fail(ErrorKind::parse, "'" + path_ + "' is a two-file NIfTI-1 header (.hdr/.img); convert it to a single .nii");
    if (std::memcmp(h + 344, "n+1", 4) != 0) fail(ErrorKind::parse, "'" + path_ + "' lacks the NIfTI-1 magic \"n+1\"");
    for (int k = 0; k < 8; ++k) hd.dim[k] = get<std::int16_t>(h + 40 + 2 * k, s);
    hd.intent_code = get<std::int16_t>(h + 68, s);
    hd.datatype = get<std::int16_t>(h + 70, s);
    const int bitpix = get<std::int16_t>(h + 72, s);
    for (int k = 0; k < 8; ++k) hd.pixdim[k] = get<float>(h + 76 + 4 * k, s);
    const double offset = get<float>(h + 108, s);
    if (!is_whole(offset) || offset < 0 || offset > static_cast<double>(max_count))
      bad("vox_offset", format_double(offset) + " is not a whole number of bytes from 0 to 2^62");
    vox_offset = static_cast<std::int64_t>(offset);
    hd.slope = get<float>(h + 112, s);
    hd.intercept = get<float>(h + 116, s);
    hd.xyzt_units = h[123];
    hd.sform_code = get<std::int16_t>(h + 254, s);
    for (int r = 0; r < 3; ++r)
      for (int c = 0; c < 4; ++c) hd.srow[r][c] = get<float>(h + 280 + 16 * r + 4 * c, s);
    if (item_size(hd.datatype) != 0 && bitpix != static_cast<int>(8 * item_size(hd.datatype)))
      bad("bitpix", std::to_string(bitpix) + " does not match datatype " + std::to_string(hd.datatype) + " (" +
                        std::to_string(8 * item_size(hd.datatype)) + " bits)");
  } else {
    if (std::memcmp(h + 4, "ni2", 4) == 0)
      fail(ErrorKind::parse, "'" + path_ + "' is a two-file NIfTI-2 header; convert it to a single .nii");
    if (std::memcmp(h + 4, "n+2", 4) != 0) fail(ErrorKind::parse, "'" + path_ + "' lacks the NIfTI-2 magic \"n+2\"");
    if (std::memcmp(h + 8, "\r\n\032\n", 4) != 0)
      fail(ErrorKind::parse, "'" + path_ + "': the NIfTI-2 magic's line-end bytes are altered (copied as text?)");
    hd.datatype = get<std::int16_t>(h + 12, s);
    const int bitpix = get<std::int16_t>(h + 14, s);
    for (int k = 0; k < 8; ++k) hd.dim[k] = get<std::int64_t>(h + 16 + 8 * k, s);
    for (int k = 0; k < 8; ++k) hd.pixdim[k] = get<double>(h + 104 + 8 * k, s);
    vox_offset = get<std::int64_t>(h + 168, s);
    if (vox_offset < 0 || vox_offset > max_count) bad("vox_offset", std::to_string(vox_offset) + " is not from 0 to 2^62");
    hd.slope = get<double>(h + 176, s);
    hd.intercept = get<double>(h + 184, s);
    hd.sform_code = get<std::int32_t>(h + 348, s);
    for (int r = 0; r < 3; ++r)
      for (int c = 0; c < 4; ++c) hd.srow[r][c] = get<double>(h + 400 + 32 * r + 8 * c, s);
    hd.xyzt_units = get<std::int32_t>(h + 500, s);
    hd.intent_code = get<std::int32_t>(h + 504, s);
    if (item_size(hd.datatype) != 0 && bitpix != static_cast<int>(8 * item_size(hd.datatype)))
      bad("bitpix", std::to_string(bitpix) + " does not match datatype " + std::to_string(hd.datatype) + " (" +
                        std::to_string(8 * item_size(hd.datatype)) + " bits)");
  }
  if (hd.dim[0] < 1 || hd.dim[0] > 7) bad("dim[0]", std::to_string(hd.dim[0]) + " is not 1..7");
  hd.values = 1;
  for (int k = 1; k <= 7; ++k) {
    if (k > hd.dim[0]) hd.dim[k] = 1;
    if (hd.dim[k] < 1) bad("dim[" + std::to_string(k) + "]", std::to_string(hd.dim[k]) + " is not positive");
    hd.values = checked_product(hd.values, hd.dim[k], "'" + path_ + "': the number of values declared by dim");
  }
  hd.item_bytes = item_size(hd.datatype);
  if (hd.item_bytes == 0)
    fail(ErrorKind::data, "'" + path_ + "': NIfTI datatype " + datatype_name(hd.datatype) +
                              " is not supported (use an integer or float32/float64 image)");
  // Single-file images keep the header and a 4-byte extension flag before the data; an
  // offset of 0 comes from old writers and means "right after them".
  const std::int64_t first_free = static_cast<std::int64_t>(size) + 4;
  if (vox_offset == 0) vox_offset = first_free;
  if (vox_offset < first_free)
    bad("vox_offset", std::to_string(vox_offset) + " points inside the header (the data start at byte " +
                          std::to_string(first_free) + " or later)");
  hd.vox_offset = vox_offset;
  // Scaling as NIfTI defines it: a slope of 0 (or not a number) means none.
  if (hd.slope != 0.0 && std::isfinite(hd.slope)) {
    if (!std::isfinite(hd.intercept)) bad("scl_inter", format_double(hd.intercept) + " is not finite while scl_slope is set");
    hd.scaled = !(hd.slope == 1.0 && hd.intercept == 0.0);
  }
  if (!hd.scaled) hd.slope = 1.0, hd.intercept = 0.0;
}

void ImageFile::read_extensions(MemoryBudget& budget) {
  const std::int64_t header_size = header_.version == 1 ? 348 : 540;
  unsigned char flag[4];
  read_bytes(flag, 4, "the NIfTI extension flag");
  std::int64_t at = header_size + 4;
  const std::int64_t end = header_.vox_offset;
  int number = 0;
  // As nibabel reads them: extensions follow while 16 or more bytes remain before the data.
  while (flag[0] != 0 && end - at >= 16) {
    ++number;
    unsigned char head[8];
    read_bytes(head, 8, "extension " + std::to_string(number));
    const std::int32_t esize = get<std::int32_t>(head, header_.swap);
    const std::int32_t ecode = get<std::int32_t>(head + 4, header_.swap);
    if (esize < 8 || esize > end - at)
      bad("extension " + std::to_string(number) + " esize",
          std::to_string(esize) + " at byte " + std::to_string(at) + " does not fit between 8 and the " +
              std::to_string(end - at) + " bytes left before vox_offset " + std::to_string(end));
    const auto content = static_cast<std::uint64_t>(esize) - 8;
    if (ecode == 32) {  // CIFTI
      if (has_cifti_) bad("extension " + std::to_string(number), "a second CIFTI extension (code 32)");
      if (content > max_cifti_text)
        bad("extension " + std::to_string(number) + " esize",
            "the CIFTI header text of " + std::to_string(content) + " bytes is larger than the 64 MiB allowed");
      budget.take(content, "'" + path_ + "': the CIFTI header text");
      // Read in pieces so that a compressed file only grows the text as it is decoded.
      cifti_.clear();
      std::uint64_t left = content;
      while (left > 0) {
        const auto piece = static_cast<std::size_t>(std::min<std::uint64_t>(left, 1u << 16));
        const std::size_t old = cifti_.size();
        cifti_.resize(old + piece);
        read_bytes(cifti_.data() + old, piece, "the CIFTI extension");
        left -= piece;
      }
      while (!cifti_.empty() && cifti_.back() == '\0') cifti_.pop_back();
      has_cifti_ = true;
    } else {
      skip_bytes(content, "extension " + std::to_string(number));
    }
    at += esize;
  }
  skip_bytes(static_cast<std::uint64_t>(end - at), "the bytes before the data (vox_offset " + std::to_string(end) + ")");
}

void ImageFile::read_values(double* out, std::size_t count, const std::string& what) {
  const std::size_t size = header_.item_bytes;
  read_bytes(raw_.data(), count * size, what);
  for (std::size_t i = 0; i < count; ++i) out[i] = stored_value(raw_.data() + i * size, header_.datatype, header_.swap);
  if (header_.scaled)
    for (std::size_t i = 0; i < count; ++i) out[i] = header_.slope * out[i] + header_.intercept;
}

void ImageFile::skip_values(std::int64_t count, const std::string& what) {
  skip_bytes(static_cast<std::uint64_t>(count) * header_.item_bytes, what);
}

void ImageFile::read_labels(std::int64_t* out, std::size_t count, const std::function<std::string(std::size_t)>& describe) {
  const std::size_t size = header_.item_bytes;
  read_bytes(raw_.data(), count * size, "the labels");
  const int type = header_.datatype;
  auto refuse = [&](std::size_t k, const std::string& value) {
    fail(ErrorKind::data, "'" + path_ + "': " + describe(k) + " holds " + value +
                              ", not an integer label (labels are whole numbers from 0 to 2^53; 0 is background)");
  };
  for (std::size_t k = 0; k < count; ++k) {
    const unsigned char* p = raw_.data() + k * size;
    if (!header_.scaled && (type == 1024 || type == 1280)) {
      // 64-bit integers are checked before any conversion, so none is rounded or wrapped.
      if (type == 1024) {
        const auto v = get<std::int64_t>(p, header_.swap);
        if (v < 0 || v > static_cast<std::int64_t>(max_label)) refuse(k, std::to_string(v));
        out[k] = v;
      } else {
        const auto v = get<std::uint64_t>(p, header_.swap);
        if (v > static_cast<std::uint64_t>(max_label)) refuse(k, std::to_string(v));
        out[k] = static_cast<std::int64_t>(v);
      }
      continue;
    }
    double v = stored_value(p, type, header_.swap);
    if (header_.scaled) v = header_.slope * v + header_.intercept;
    if (!is_whole(v) || v < 0 || v > max_label) refuse(k, format_double(v));
    out[k] = static_cast<std::int64_t>(v);
  }
}

void PlaceRuns::add(std::int64_t place, std::int64_t column) {
  if (!runs_.empty()) {
    Run& last = runs_.back();
    if (last.column == column && last.first + last.length == place) {
      ++last.length;
      return;
    }
  }
  if (runs_.size() == runs_.capacity()) {  // grow by doubling, charging the budget first
    const std::size_t more = std::max<std::size_t>(1024, runs_.capacity());
    budget_->take(more * sizeof(Run), "'" + source_ + "': the table of labelled places");
    runs_.reserve(runs_.capacity() + more);
  }
  runs_.push_back({place, 1, column});
}

void PlaceRuns::renumber(const std::vector<std::int64_t>& new_column) {
  for (Run& r : runs_) r.column = new_column[static_cast<std::size_t>(r.column)];
}

std::vector<std::int64_t> PlaceRuns::places_per_column(std::int64_t columns) const {
  std::vector<std::int64_t> count(static_cast<std::size_t>(columns), 0);
  for (const Run& r : runs_) count[static_cast<std::size_t>(r.column)] += r.length;
  return count;
}

std::vector<std::int64_t> order_columns_by_label(const std::map<std::int64_t, std::int64_t>& column_of, PlaceRuns& runs) {
  std::vector<std::int64_t> labels, new_column(column_of.size());
  for (const auto& [label, column] : column_of) {  // a std::map iterates in ascending label order
    new_column[static_cast<std::size_t>(column)] = static_cast<std::int64_t>(labels.size());
    labels.push_back(label);
  }
  runs.renumber(new_column);
  return labels;
}

std::vector<std::string> region_names(const std::vector<std::int64_t>& labels,
                                      const std::map<std::int64_t, std::string>* table, const std::string& table_source) {
  std::vector<std::string> names;
  std::map<std::string, std::int64_t> seen;
  for (const std::int64_t k : labels) {
    std::string name = "label-" + std::to_string(k);
    if (table) {
      const auto found = table->find(k);
      if (found == table->end())
        fail(ErrorKind::data, "label " + std::to_string(k) + " is used by the atlas but missing from '" + table_source + "'");
      name = found->second;
      check_region_name(name, "'" + table_source + "', label " + std::to_string(k));
    }
    const auto [at, fresh] = seen.emplace(name, k);
    if (!fresh)
      fail(ErrorKind::data, "'" + table_source + "': labels " + std::to_string(at->second) + " and " + std::to_string(k) +
                                " are both named " + excerpt(name));
    names.push_back(std::move(name));
  }
  return names;
}

Eigen::MatrixXd column_means(ImageFile& file, std::int64_t frames, std::int64_t places, bool frames_fast,
                             const PlaceRuns& runs, std::int64_t columns, MemoryBudget& budget) {
  const std::string& path = file.path();
  // The sums and the final matrix: reserved now, allocated as the data arrive.
  const std::int64_t cells = checked_product(frames, columns, "'" + path + "': the regional series (frames x regions)");
  budget.take(static_cast<std::uint64_t>(checked_product(cells, 16, "'" + path + "': the regional series")),
              "'" + path + "': the regional series (" + std::to_string(frames) + " frames x " + std::to_string(columns) + " regions)");
  const auto& rs = runs.runs();
  std::vector<double> chunk(ImageFile::chunk_values);
  Eigen::MatrixXd out(0, 0);
  if (!frames_fast) {
    // One frame (volume) after another; a row of sums is added once its frame is decoded.
    std::vector<double> sums;  // frames x columns, row-major
    for (std::int64_t t = 0; t < frames; ++t) {
      const std::string what = "frame " + std::to_string(t + 1) + " of " + std::to_string(frames);
      sums.resize(sums.size() + static_cast<std::size_t>(columns), 0.0);
      double* row = sums.data() + t * columns;
      std::size_t r = 0;
      for (std::int64_t p0 = 0; p0 < places;) {
        const auto n = static_cast<std::int64_t>(std::min<std::int64_t>(ImageFile::chunk_values, places - p0));
        file.read_values(chunk.data(), static_cast<std::size_t>(n), what);
        while (r < rs.size() && rs[r].first < p0 + n) {
          const std::int64_t lo = std::max(rs[r].first, p0), hi = std::min(rs[r].first + rs[r].length, p0 + n);
          double s = 0.0;
          for (std::int64_t p = lo; p < hi; ++p) s += chunk[static_cast<std::size_t>(p - p0)];
          row[rs[r].column] += s;
          if (rs[r].first + rs[r].length > p0 + n) break;
          ++r;
        }
        p0 += n;
      }
    }
    out = Eigen::Map<const Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>>(sums.data(), frames, columns);
  } else {
    // One place's whole series after another; a column's sums appear with its first place.
    std::vector<std::vector<double>> sums(static_cast<std::size_t>(columns));
    std::size_t r = 0;
    for (std::int64_t p = 0; p < places; ++p) {
      while (r < rs.size() && rs[r].first + rs[r].length <= p) ++r;
      const std::string what = "series " + std::to_string(p + 1) + " of " + std::to_string(places);
      if (r >= rs.size() || rs[r].first > p) {
        file.skip_values(frames, what);
        continue;
      }
      auto& column = sums[static_cast<std::size_t>(rs[r].column)];
      const bool first = column.empty();
      for (std::int64_t t0 = 0; t0 < frames;) {
        const auto n = static_cast<std::int64_t>(std::min<std::int64_t>(ImageFile::chunk_values, frames - t0));
        file.read_values(chunk.data(), static_cast<std::size_t>(n), what);
        if (first) column.insert(column.end(), chunk.begin(), chunk.begin() + n);
        else
          for (std::int64_t t = 0; t < n; ++t) column[static_cast<std::size_t>(t0 + t)] += chunk[static_cast<std::size_t>(t)];
        t0 += n;
      }
    }
    out.resize(frames, columns);
    for (std::int64_t c = 0; c < columns; ++c) {
      auto& column = sums[static_cast<std::size_t>(c)];
      if (static_cast<std::int64_t>(column.size()) != frames)
        fail(ErrorKind::internal, "'" + path + "': region " + std::to_string(c + 1) + " has no place");
      out.col(c) = Eigen::Map<const Eigen::VectorXd>(column.data(), frames);
      std::vector<double>().swap(column);
    }
  }
  const auto count = runs.places_per_column(columns);
  for (std::int64_t c = 0; c < columns; ++c) out.col(c) /= static_cast<double>(count[static_cast<std::size_t>(c)]);
  return out;
}

}  // namespace critplex::io
