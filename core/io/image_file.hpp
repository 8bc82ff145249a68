// NIfTI-1 and NIfTI-2 files (.nii, .nii.gz) read as a stream: the header, with every
// declared size checked before anything is allocated, the extensions, then the stored
// values in file order. Shared by the volume reader (nifti.cpp) and the CIFTI-2 reader
// (cifti.cpp); not part of the io stage's public surface.
//
// Size rules (why: issue 13 found headers believed before the file was measured):
// - every dimension, the value count, the byte count and the data's end are computed
//   with overflow checks; vox_offset must be a whole number inside the file;
// - for a plain file the declared data must fit in the file's real size before any read;
// - a gzip file's real size is unknown until it is decoded, so nothing is sized from the
//   header alone: extension text and results grow only as data is decoded, in proportion
//   to it (at most 16 bytes held per byte decoded), and never past the memory budget;
// - extensions must fit between the header and vox_offset; only the CIFTI extension
//   (code 32) is kept, at most 64 MiB, the others are streamed past.
#pragma once

#include <Eigen/Core>
#include <zlib.h>

#include <array>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <string>
#include <vector>

namespace critplex::io {

// Default cap on the memory an image reader holds (label runs, brainordinate tables,
// the CIFTI header text and the regional series, counted twice for the final copy).
inline constexpr std::uint64_t default_image_memory_budget = std::uint64_t{1} << 30;  // 1 GiB

// Running total of what a reader has committed to hold; `take` refuses (ErrorKind::budget)
// before the allocation that would pass the limit.
class MemoryBudget {
 public:
  explicit MemoryBudget(std::uint64_t limit) : limit_(limit) {}
  // `what` names the file and the holding, e.g. "'atlas.nii': the table of labelled voxels".
  void take(std::uint64_t bytes, const std::string& what);
  std::uint64_t limit() const { return limit_; }

 private:
  std::uint64_t limit_;
  std::uint64_t used_ = 0;
};

struct ImageHeader {
  int version = 1;                  // NIfTI-1 or NIfTI-2
  std::array<std::int64_t, 8> dim{};  // dim[0] = rank (1..7); dimensions past the rank are 1
  std::array<double, 8> pixdim{};
  int datatype = 0;
  std::size_t item_bytes = 0;
  std::int64_t vox_offset = 0;      // first data byte
  bool scaled = false;              // slope and intercept apply (scl_slope finite and non-zero)
  double slope = 1.0, intercept = 0.0;
  int xyzt_units = 0;
  int intent_code = 0;
  int sform_code = 0;
  double srow[3][4] = {};
  bool swap = false;                // stored in the other byte order
  std::int64_t values = 0;          // product of dim[1..rank]

  std::int64_t spatial() const { return dim[1] * dim[2] * dim[3]; }
  std::int64_t frames() const { return dim[4] * dim[5] * dim[6] * dim[7]; }
  bool integer_type() const { return datatype != 16 && datatype != 64; }
};

class ImageFile {
 public:
  static constexpr std::size_t chunk_values = 4096;   // values per read_values call at most

  // Opens `path`, reads and checks the header and the extensions, and stops at the first
  // stored value. The CIFTI extension's text is charged to `budget`.
  ImageFile(const std::string& path, MemoryBudget& budget);
  ImageFile(ImageFile&&) = delete;

  const std::string& path() const { return path_; }
  const ImageHeader& header() const { return header_; }
  // Text of the CIFTI-2 extension (code 32, trailing NULs removed); nullptr when absent.
  const std::string* cifti_xml() const { return has_cifti_ ? &cifti_ : nullptr; }

  // The next `count` (<= chunk_values) stored values as doubles, scaling applied. `what`
  // names the part being read for the message when the file ends early.
  void read_values(double* out, std::size_t count, const std::string& what);
  void skip_values(std::int64_t count, const std::string& what);
  // The next `count` values as labels: whole numbers from 0 to 2^53 (exact in a double and
  // in every integer type). `describe(k)` names the k-th value of this call in messages.
  void read_labels(std::int64_t* out, std::size_t count, const std::function<std::string(std::size_t)>& describe);

 private:
  void read_bytes(void* out, std::size_t bytes, const std::string& what);
  void skip_bytes(std::uint64_t bytes, const std::string& what);
  void read_header();
  void read_extensions(MemoryBudget& budget);
  [[noreturn]] void bad(const std::string& field, const std::string& problem) const;

  struct Close {
    void operator()(gzFile f) const { gzclose(f); }
  };
  std::string path_;
  std::unique_ptr<gzFile_s, Close> owner_;  // closes the file also when the constructor throws
  gzFile file_ = nullptr;
  ImageHeader header_;
  std::string cifti_;
  bool has_cifti_ = false;
  std::vector<unsigned char> raw_;  // one chunk of stored bytes
};

// Which column (region) each place (voxel, brainordinate or parcel) belongs to, as runs
// of consecutive places that share a column; places in no run are background.
class PlaceRuns {
 public:
  struct Run {
    std::int64_t first, length, column;
  };
  PlaceRuns(MemoryBudget& budget, std::string source) : budget_(&budget), source_(std::move(source)) {}
  // Places must come in increasing order; a place that continues the last run extends it.
  void add(std::int64_t place, std::int64_t column);
  // Gives column c the number new_column[c] (a permutation of 0..columns-1).
  void renumber(const std::vector<std::int64_t>& new_column);
  const std::vector<Run>& runs() const { return runs_; }
  std::vector<std::int64_t> places_per_column(std::int64_t columns) const;

 private:
  MemoryBudget* budget_;
  std::string source_;  // the file whose labels these are, for messages
  std::vector<Run> runs_;
};

// Columns were numbered by each label's first appearance (`column_of`: label -> column);
// renumbers them, and the runs, in ascending label order and returns the labels in that order.
std::vector<std::int64_t> order_columns_by_label(const std::map<std::int64_t, std::int64_t>& column_of, PlaceRuns& runs);

// Names of the regions of `labels`: from `table` when given (each label must be in it),
// else "label-<k>". Names must be valid (check_region_name) and unique. `table_source`
// names the table's file in messages.
std::vector<std::string> region_names(const std::vector<std::int64_t>& labels,
                                      const std::map<std::int64_t, std::string>* table, const std::string& table_source);

// Mean over each column's places of every frame: a frames x columns matrix. The data hold frames x places values; `frames_fast` says the frame index
// varies fastest in the file (a CIFTI series on dimension 0), otherwise the place index
// does (a NIfTI 4-D image: one volume after another). Every column needs a place.
Eigen::MatrixXd column_means(ImageFile& file, std::int64_t frames, std::int64_t places, bool frames_fast,
                                 const PlaceRuns& runs, std::int64_t columns, MemoryBudget& budget);

// Throws ErrorKind::data naming `where` unless `name` can name a region: non-empty, at
// most 256 bytes of UTF-8, no control characters (they would break TSV outputs).
void check_region_name(const std::string& name, const std::string& where);
// `text` in single quotes for a message, cut after `limit` bytes (long values are not echoed whole).
std::string excerpt(const std::string& text, std::size_t limit = 60);

// a * b, or ErrorKind::parse naming `what` when the product passes 2^62.
std::int64_t checked_product(std::int64_t a, std::int64_t b, const std::string& what);

}  // namespace critplex::io
