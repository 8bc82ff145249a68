// CIFTI-2 files: a NIfTI-2 image whose extension of code 32 holds an XML header that maps
// each of the two matrix dimensions (dim[5] and dim[6]) to an axis: a series (time), brain
// models (brainordinates: surface vertices and voxels), parcels, label maps or scalar
// maps. The stored values run with dimension 0 fastest, as in any NIfTI file.
// Used by read_image_series (nifti.hpp): dense series + dense label file, and parcellated
// series. Element and attribute names follow the CIFTI-2 standard.
#pragma once

#include <array>
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "io/image_file.hpp"
#include "io/nifti.hpp"

namespace critplex::io {

struct CiftiVolume {
  std::array<std::int64_t, 3> dims{};
  std::array<double, 12> ijk_to_xyz{};  // first three rows, in millimetres
};

struct CiftiBrainModels {
  struct Model {
    std::string structure;            // e.g. CIFTI_STRUCTURE_CORTEX_LEFT
    bool surface = false;             // else voxels
    std::int64_t offset = 0, count = 0;
    std::int64_t surface_vertices = 0;
    std::vector<std::int64_t> places;  // vertex numbers, or voxels as i + d0 * (j + d1 * k)
  };
  std::vector<Model> models;
  bool has_volume = false;
  CiftiVolume volume;
};

struct CiftiLabelMap {
  std::string name;
  std::map<std::int64_t, std::string> labels;  // key -> label name
};

struct CiftiAxis {
  enum class Kind { series, brain_models, parcels, labels, scalars };
  Kind kind = Kind::series;
  std::int64_t size = 0;      // length of the matrix dimension
  std::size_t line = 0;       // of its MatrixIndicesMap, for messages
  // series
  double step = 0.0;          // SeriesStep x 10^SeriesExponent
  std::string unit;           // SECOND, HERTZ, METER or RADIAN
  // brain models
  CiftiBrainModels brain;
  // parcels
  std::vector<std::string> parcel_names;
  // labels (one table per map) and scalars (map names only)
  std::vector<CiftiLabelMap> maps;
};

struct CiftiHeader {
  std::array<CiftiAxis, 2> axes;  // by matrix dimension
};

// Parses and checks the CIFTI-2 XML of `file` against its NIfTI dimensions. Errors name
// the file and the element (line and column).
CiftiHeader read_cifti_header(const ImageFile& file, MemoryBudget& budget);

// Regional series from a CIFTI dense or parcellated series (see read_image_series).
series::Series read_cifti_series(ImageFile& image, const CiftiHeader& header, const std::string& labels_path,
                                 const ImageOptions& options, MemoryBudget& budget);

}  // namespace critplex::io
