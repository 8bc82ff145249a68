#include "io/cifti.hpp"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <sstream>

#include "base/error.hpp"
#include "io/files.hpp"
#include "io/xml.hpp"

namespace critplex::io {

namespace {

constexpr std::int64_t max_count = std::int64_t{1} << 62;
constexpr std::int64_t max_vertices = std::int64_t{1} << 31;

std::string trim(const std::string& s) {
  const auto first = s.find_first_not_of(" \t\r\n");
  if (first == std::string::npos) return "";
  return s.substr(first, s.find_last_not_of(" \t\r\n") - first + 1);
}

bool is_blank(char c) { return c == ' ' || c == '\t' || c == '\n' || c == '\r'; }

std::string kind_name(CiftiAxis::Kind k) {
  switch (k) {
    case CiftiAxis::Kind::series: return "series";
    case CiftiAxis::Kind::brain_models: return "brain models";
    case CiftiAxis::Kind::parcels: return "parcels";
    case CiftiAxis::Kind::labels: return "label maps";
    case CiftiAxis::Kind::scalars: return "scalar maps";
  }
  return "?";
}

std::string describe(const CiftiHeader& h) {
  return kind_name(h.axes[0].kind) + " x " + kind_name(h.axes[1].kind);
}

// Reads the parts of a CIFTI-2 header; every error names the file and the element.
class HeaderReader {
 public:
  HeaderReader(const std::string& path, MemoryBudget& budget) : path_(path), budget_(budget) {}

  [[noreturn]] void bad(const XmlElement& e, const std::string& problem) const {
    fail(ErrorKind::parse, "'" + path_ + "': CIFTI header, <" + e.name + "> at line " + std::to_string(e.line) +
                               ", column " + std::to_string(e.column) + ": " + problem);
  }

  const std::string& text(const XmlElement& e, const char* key) const {
    const std::string* v = e.attribute(key);
    if (!v) bad(e, std::string("attribute ") + key + " is missing");
    return *v;
  }

  std::int64_t integer(const XmlElement& e, const char* key, std::int64_t lo, std::int64_t hi) const {
    const std::string& raw = text(e, key);
    const std::string t = trim(raw);
    std::int64_t x = 0;
    const auto [end, ec] = std::from_chars(t.data(), t.data() + t.size(), x);
    if (t.empty() || ec != std::errc() || end != t.data() + t.size() || x < lo || x > hi)
      bad(e, std::string("attribute ") + key + " = " + excerpt(raw) + " is not a whole number from " + std::to_string(lo) +
                 " to " + std::to_string(hi));
    return x;
  }

  double number(const XmlElement& e, const char* key) const {
    const std::string& raw = text(e, key);
    const std::string t = trim(raw);
    double x = 0;
    const auto [end, ec] = std::from_chars(t.data(), t.data() + t.size(), x);
    if (t.empty() || ec != std::errc() || end != t.data() + t.size() || !std::isfinite(x))
      bad(e, std::string("attribute ") + key + " = " + excerpt(raw) + " is not a finite number");
    return x;
  }

  const XmlElement& only_child(const XmlElement& e, const char* name) const {
    const auto found = e.children_named(name);
    if (found.size() != 1)
      bad(e, "needs exactly one <" + std::string(name) + ">, found " + std::to_string(found.size()));
    return *found.front();
  }

  // Calls f(k, value) for the k-th whitespace-separated whole number of e's text, each of
  // which must be below limit(k). `expected` (when >= 0) is the count the text must hold.
  template <class Limit, class F>
  std::int64_t each_index(const XmlElement& e, std::int64_t expected, Limit limit, F f) const {
    const std::string& s = e.text;
    std::int64_t k = 0;
    for (std::size_t i = 0; i < s.size();) {
      if (is_blank(s[i])) {
        ++i;
        continue;
      }
      std::size_t j = i;
      while (j < s.size() && !is_blank(s[j])) ++j;
      std::int64_t x = 0;
      const auto [end, ec] = std::from_chars(s.data() + i, s.data() + j, x);
      if (expected >= 0 && k >= expected)
        bad(e, "holds more than the " + std::to_string(expected) + " numbers expected");
      const std::int64_t hi = limit(k);
      if (ec != std::errc() || end != s.data() + j || x < 0 || x >= hi)
        bad(e, "number " + std::to_string(k + 1) + " = " + excerpt(s.substr(i, j - i)) + " is not a whole number from 0 to " +
                   std::to_string(hi - 1));
      f(k, x);
      ++k;
      i = j;
    }
    if (expected >= 0 && k != expected)
      bad(e, "holds " + std::to_string(k) + " numbers, " + std::to_string(expected) + " expected");
    return k;
  }

  CiftiVolume volume(const XmlElement& e) const {
    CiftiVolume v;
    const std::string& dims = text(e, "VolumeDimensions");
    std::size_t start = 0;
    int n = 0;
    std::int64_t product = 1;
    while (true) {
      const auto comma = dims.find(',', start);
      const std::string part = trim(dims.substr(start, comma == std::string::npos ? std::string::npos : comma - start));
      std::int64_t x = 0;
      const auto [end, ec] = std::from_chars(part.data(), part.data() + part.size(), x);
      if (n >= 3 || part.empty() || ec != std::errc() || end != part.data() + part.size() || x < 1 || x > max_vertices)
        bad(e, "VolumeDimensions = " + excerpt(dims) + " is not three positive whole numbers separated by commas");
      v.dims[static_cast<std::size_t>(n++)] = x;
      product = checked_product(product, x, "'" + path_ + "': the CIFTI volume");
      if (comma == std::string::npos) break;
      start = comma + 1;
    }
    if (n != 3) bad(e, "VolumeDimensions = " + excerpt(dims) + " is not three positive whole numbers separated by commas");
    const XmlElement& m = only_child(e, "TransformationMatrixVoxelIndicesIJKtoXYZ");
    const double scale = std::pow(10.0, static_cast<double>(integer(m, "MeterExponent", -30, 30) + 3));  // to millimetres
    std::vector<double> values;
    std::istringstream in(m.text);
    std::string token;
    while (in >> token) {
      double x = 0;
      const auto [end, ec] = std::from_chars(token.data(), token.data() + token.size(), x);
      if (values.size() >= 16 || ec != std::errc() || end != token.data() + token.size() || !std::isfinite(x))
        bad(m, "needs 16 finite numbers (a 4 x 4 matrix, rows first); " + excerpt(token) + " is not one of them");
      values.push_back(x * scale);
    }
    if (values.size() != 16) bad(m, "needs 16 numbers (a 4 x 4 matrix), found " + std::to_string(values.size()));
    std::copy(values.begin(), values.begin() + 12, v.ijk_to_xyz.begin());
    return v;
  }

  // Linear voxel numbers i + d0 * (j + d1 * k) from a VoxelIndicesIJK element.
  void voxels(const XmlElement& e, const CiftiVolume& v, std::int64_t expected, std::vector<std::int64_t>* out) const {
    std::int64_t ijk[3] = {};
    each_index(
        e, expected < 0 ? -1 : 3 * expected, [&](std::int64_t k) { return v.dims[static_cast<std::size_t>(k % 3)]; },
        [&](std::int64_t k, std::int64_t x) {
          ijk[k % 3] = x;
          if (k % 3 == 2 && out) out->push_back(ijk[0] + v.dims[0] * (ijk[1] + v.dims[1] * ijk[2]));
        });
  }

  void series(const XmlElement& e, CiftiAxis& a) const {
    a.kind = CiftiAxis::Kind::series;
    a.size = integer(e, "NumberOfSeriesPoints", 1, max_count);
    const std::int64_t exponent = integer(e, "SeriesExponent", -30, 30);
    number(e, "SeriesStart");
    a.step = number(e, "SeriesStep") * std::pow(10.0, static_cast<double>(exponent));
    a.unit = text(e, "SeriesUnit");
    if (a.unit != "SECOND" && a.unit != "HERTZ" && a.unit != "METER" && a.unit != "RADIAN")
      bad(e, "SeriesUnit = " + excerpt(a.unit) + " is not SECOND, HERTZ, METER or RADIAN");
  }

  void brain_models(const XmlElement& e, CiftiAxis& a) const {
    a.kind = CiftiAxis::Kind::brain_models;
    CiftiBrainModels& b = a.brain;
    const auto volumes = e.children_named("Volume");
    if (volumes.size() > 1) bad(*volumes[1], "a second <Volume> in one MatrixIndicesMap");
    if (!volumes.empty()) b.has_volume = true, b.volume = volume(*volumes.front());
    std::int64_t next = 0;
    for (const XmlElement* m : e.children_named("BrainModel")) {
      CiftiBrainModels::Model model;
      model.offset = integer(*m, "IndexOffset", 0, max_count);
      model.count = integer(*m, "IndexCount", 1, max_count / 4);  // three numbers per voxel stay below 2^62
      if (model.offset != next)
        bad(*m, "IndexOffset " + std::to_string(model.offset) + " does not follow the models before it (expected " +
                    std::to_string(next) + ")");
      model.structure = text(*m, "BrainStructure");
      if (!model.structure.starts_with("CIFTI_STRUCTURE_"))
        bad(*m, "BrainStructure = " + excerpt(model.structure) + " does not start with CIFTI_STRUCTURE_");
      const std::string& type = text(*m, "ModelType");
      const bool surface = type == "CIFTI_MODEL_TYPE_SURFACE";
      if (!surface && type != "CIFTI_MODEL_TYPE_VOXELS")
        bad(*m, "ModelType = " + excerpt(type) + " is not CIFTI_MODEL_TYPE_SURFACE or CIFTI_MODEL_TYPE_VOXELS");
      if (!surface && !b.has_volume) bad(*m, "voxels need a <Volume> in the same MatrixIndicesMap");
      // The list must hold IndexCount places before anything is sized from IndexCount.
      const XmlElement& list = only_child(*m, surface ? "VertexIndices" : "VoxelIndicesIJK");
      const std::int64_t numbers = (surface ? 1 : 3) * model.count;
      if (token_count(list) != numbers)
        bad(list, "holds " + std::to_string(token_count(list)) + " numbers, " + std::to_string(numbers) + " expected (IndexCount " +
                      std::to_string(model.count) + (surface ? ")" : ", three per voxel)"));
      budget_.take(static_cast<std::uint64_t>(model.count) * 8, "'" + path_ + "': the brainordinates of the CIFTI header");
      model.places.reserve(static_cast<std::size_t>(model.count));
      model.surface = surface;
      if (surface) {
        model.surface_vertices = integer(*m, "SurfaceNumberOfVertices", 1, max_vertices);
        each_index(list, model.count, [&](std::int64_t) { return model.surface_vertices; },
                   [&](std::int64_t, std::int64_t x) { model.places.push_back(x); });
      } else {
        voxels(list, b.volume, model.count, &model.places);
      }
      next = model.offset + model.count;
      if (next > max_count) bad(*m, "the brainordinates pass 2^62");
      b.models.push_back(std::move(model));
    }
    if (b.models.empty()) bad(e, "brain models without any <BrainModel>");
    a.size = next;
  }

  void parcels(const XmlElement& e, CiftiAxis& a) const {
    a.kind = CiftiAxis::Kind::parcels;
    std::map<std::string, std::int64_t> surfaces;
    for (const XmlElement* s : e.children_named("Surface")) {
      const std::string& structure = text(*s, "BrainStructure");
      if (!surfaces.emplace(structure, integer(*s, "SurfaceNumberOfVertices", 1, max_vertices)).second)
        bad(*s, "surface " + excerpt(structure) + " is declared twice");
    }
    const auto volumes = e.children_named("Volume");
    if (volumes.size() > 1) bad(*volumes[1], "a second <Volume> in one MatrixIndicesMap");
    CiftiVolume vol;
    if (!volumes.empty()) vol = volume(*volumes.front());
    for (const XmlElement* p : e.children_named("Parcel")) {
      const std::string name = trim(text(*p, "Name"));
      // The members are checked but not kept: a parcellated series already holds one
      // value per parcel.
      for (const XmlElement* v : p->children_named("Vertices")) {
        const std::string& structure = text(*v, "BrainStructure");
        const auto s = surfaces.find(structure);
        if (s == surfaces.end()) bad(*v, "surface " + excerpt(structure) + " has no <Surface> in this MatrixIndicesMap");
        each_index(*v, -1, [&](std::int64_t) { return s->second; }, [](std::int64_t, std::int64_t) {});
      }
      for (const XmlElement* v : p->children_named("VoxelIndicesIJK")) {
        if (volumes.empty()) bad(*v, "voxels need a <Volume> in the same MatrixIndicesMap");
        if (token_count(*v) % 3 != 0) bad(*v, "holds a number of values that is not a multiple of 3 (i j k per voxel)");
        voxels(*v, vol, -1, nullptr);
      }
      a.parcel_names.push_back(name);
    }
    if (a.parcel_names.empty()) bad(e, "parcels without any <Parcel>");
    a.size = static_cast<std::int64_t>(a.parcel_names.size());
  }

  // Whitespace-separated items in e's text.
  static std::int64_t token_count(const XmlElement& e) {
    std::int64_t n = 0;
    bool in_token = false;
    for (char c : e.text) {
      if (!is_blank(c) && !in_token) ++n;
      in_token = !is_blank(c);
    }
    return n;
  }

  void named_maps(const XmlElement& e, CiftiAxis& a, bool with_labels) const {
    a.kind = with_labels ? CiftiAxis::Kind::labels : CiftiAxis::Kind::scalars;
    for (const XmlElement* m : e.children_named("NamedMap")) {
      CiftiLabelMap map;
      map.name = trim(only_child(*m, "MapName").text);
      if (with_labels) {
        for (const XmlElement* l : only_child(*m, "LabelTable").children_named("Label")) {
          const std::int64_t key = integer(*l, "Key", -2147483648LL, 2147483647LL);
          if (!map.labels.emplace(key, trim(l->text)).second) bad(*l, "key " + std::to_string(key) + " appears twice");
        }
      }
      a.maps.push_back(std::move(map));
    }
    if (a.maps.empty()) bad(e, "maps without any <NamedMap>");
    a.size = static_cast<std::int64_t>(a.maps.size());
  }

  CiftiAxis axis(const XmlElement& e) const {
    CiftiAxis a;
    a.line = e.line;
    const std::string& type = text(e, "IndicesMapToDataType");
    if (type == "CIFTI_INDEX_TYPE_SERIES") series(e, a);
    else if (type == "CIFTI_INDEX_TYPE_BRAIN_MODELS") brain_models(e, a);
    else if (type == "CIFTI_INDEX_TYPE_PARCELS") parcels(e, a);
    else if (type == "CIFTI_INDEX_TYPE_LABELS") named_maps(e, a, true);
    else if (type == "CIFTI_INDEX_TYPE_SCALARS") named_maps(e, a, false);
    else bad(e, "IndicesMapToDataType = " + excerpt(type) + " is not one critplex reads (series, brain models, parcels, labels, scalars)");
    return a;
  }

 private:
  const std::string& path_;
  MemoryBudget& budget_;
};

// Brainordinate identity across files: (structure number, vertex) on a surface, (-1, voxel)
// in the volume.
using PlaceKey = std::pair<std::int64_t, std::int64_t>;

std::string place_name(const CiftiBrainModels& b, std::int64_t index) {
  for (const auto& m : b.models)
    if (index >= m.offset && index < m.offset + m.count) {
      const std::int64_t p = m.places[static_cast<std::size_t>(index - m.offset)];
      if (m.surface) return "brainordinate " + std::to_string(index) + " (" + m.structure + " vertex " + std::to_string(p) + ")";
      const auto& d = b.volume.dims;
      return "brainordinate " + std::to_string(index) + " (" + m.structure + " voxel " + std::to_string(p % d[0]) + " " +
             std::to_string(p / d[0] % d[1]) + " " + std::to_string(p / d[0] / d[1]) + ")";
    }
  return "brainordinate " + std::to_string(index);
}

// The two files must put their brainordinates on the same surfaces and volume grid.
void check_same_space(const CiftiBrainModels& a, const std::string& a_path, const CiftiBrainModels& b, const std::string& b_path) {
  std::map<std::string, std::int64_t> vertices;
  for (const auto& m : a.models)
    if (m.surface) vertices[m.structure] = m.surface_vertices;
  for (const auto& m : b.models) {
    if (!m.surface) continue;
    const auto v = vertices.find(m.structure);
    if (v != vertices.end() && v->second != m.surface_vertices)
      fail(ErrorKind::data, "surfaces differ: " + m.structure + " has " + std::to_string(v->second) + " vertices in '" + a_path +
                                "' but " + std::to_string(m.surface_vertices) + " in '" + b_path + "'");
  }
  auto has_voxels = [](const CiftiBrainModels& x) {
    return std::any_of(x.models.begin(), x.models.end(), [](const auto& m) { return !m.surface; });
  };
  if (!has_voxels(a) || !has_voxels(b)) return;
  if (a.volume.dims != b.volume.dims)
    fail(ErrorKind::data, "grids differ: the CIFTI volume of '" + a_path + "' is " + std::to_string(a.volume.dims[0]) + "x" +
                              std::to_string(a.volume.dims[1]) + "x" + std::to_string(a.volume.dims[2]) + " voxels but that of '" +
                              b_path + "' is " + std::to_string(b.volume.dims[0]) + "x" + std::to_string(b.volume.dims[1]) + "x" +
                              std::to_string(b.volume.dims[2]));
  for (std::size_t k = 0; k < 12; ++k)
    if (std::fabs(a.volume.ijk_to_xyz[k] - b.volume.ijk_to_xyz[k]) > 1e-3)
      fail(ErrorKind::data, "grids differ: the voxel-to-world transforms of the CIFTI volumes of '" + a_path + "' and '" + b_path +
                                "' do not match");
}

// Which map of a label (or scalar) file to use: options.label_map names it or numbers it from 1.
std::size_t choose_map(const CiftiAxis& maps, const std::string& path, const std::string& wanted) {
  auto list = [&] {
    std::string names;
    for (std::size_t k = 0; k < maps.maps.size() && k < 10; ++k) names += (k ? ", " : "") + excerpt(maps.maps[k].name, 40);
    return names + (maps.maps.size() > 10 ? ", ..." : "");
  };
  if (wanted.empty()) {
    if (maps.maps.size() != 1)
      fail(ErrorKind::argument, "'" + path + "' has " + std::to_string(maps.maps.size()) + " maps (" + list() +
                                    "); choose one with the option \"label_map\" (its name or its number from 1)");
    return 0;
  }
  for (std::size_t k = 0; k < maps.maps.size(); ++k)
    if (maps.maps[k].name == wanted) return k;
  std::size_t number = 0;
  const auto [end, ec] = std::from_chars(wanted.data(), wanted.data() + wanted.size(), number);
  if (ec == std::errc() && end == wanted.data() + wanted.size() && number >= 1 && number <= maps.maps.size()) return number - 1;
  fail(ErrorKind::argument, "option \"label_map\" = " + excerpt(wanted) + " is neither the name nor the number (1.." +
                                std::to_string(maps.maps.size()) + ") of a map of '" + path + "' (" + list() + ")");
}

// Label of every brainordinate of the atlas in map `map`.
std::vector<std::int64_t> read_atlas_labels(ImageFile& atlas, const CiftiAxis& brain, std::size_t map, bool maps_fast,
                                            std::int64_t map_count, const std::string& map_name, MemoryBudget& budget) {
  const std::int64_t n = brain.size;
  budget.take(static_cast<std::uint64_t>(n) * 8, "'" + atlas.path() + "': the labels");
  std::vector<std::int64_t> label(static_cast<std::size_t>(n));
  const auto m = static_cast<std::int64_t>(map);
  auto describe_from = [&](std::int64_t first) {
    return [&, first](std::size_t k) {
      return place_name(brain.brain, first + static_cast<std::int64_t>(k)) + " of map " + excerpt(map_name, 40);
    };
  };
  if (maps_fast && map_count > 1) {
    for (std::int64_t b = 0; b < n; ++b) {
      atlas.skip_values(m, "the label maps");
      atlas.read_labels(&label[static_cast<std::size_t>(b)], 1, describe_from(b));
      atlas.skip_values(map_count - 1 - m, "the label maps");
    }
  } else {
    if (map_count > 1) atlas.skip_values(checked_product(m, n, "the label maps"), "the label maps");
    for (std::int64_t b0 = 0; b0 < n;) {
      const auto k = std::min<std::int64_t>(ImageFile::chunk_values, n - b0);
      atlas.read_labels(&label[static_cast<std::size_t>(b0)], static_cast<std::size_t>(k), describe_from(b0));
      b0 += k;
    }
  }
  return label;
}

// The regions of a dense series: each series brainordinate takes the label the atlas gives
// the same vertex or voxel; labels > 0 become regions in ascending order.
std::vector<std::string> dense_regions(const ImageFile& image, const CiftiAxis& space, const std::string& labels_path,
                                       const ImageOptions& options, MemoryBudget& budget, PlaceRuns& runs) {
  ImageFile atlas(labels_path, budget);
  if (!atlas.cifti_xml())
    fail(ErrorKind::data, "'" + labels_path + "' is not a CIFTI file (it has no CIFTI extension); the dense series '" +
                              image.path() + "' needs a dense label file such as a .dlabel.nii");
  const CiftiHeader ah = read_cifti_header(atlas, budget);
  int map_dim = -1;
  for (int d = 0; d < 2; ++d)
    if ((ah.axes[d].kind == CiftiAxis::Kind::labels || ah.axes[d].kind == CiftiAxis::Kind::scalars) &&
        ah.axes[1 - d].kind == CiftiAxis::Kind::brain_models)
      map_dim = d;
  if (map_dim < 0)
    fail(ErrorKind::data, "'" + labels_path + "' is a CIFTI file of " + describe(ah) +
                              "; a label file for a dense series maps label (or scalar) maps against brain models");
  const CiftiAxis& maps = ah.axes[map_dim];
  const CiftiAxis& atlas_brain = ah.axes[1 - map_dim];
  check_same_space(space.brain, image.path(), atlas_brain.brain, labels_path);
  const std::size_t map = choose_map(maps, labels_path, options.label_map);
  const auto label = read_atlas_labels(atlas, atlas_brain, map, map_dim == 0, maps.size, maps.maps[map].name, budget);

  // Atlas brainordinates by identity, and how many each label covers.
  std::map<std::string, std::int64_t> structure_number;
  budget.take(static_cast<std::uint64_t>(atlas_brain.size) * 64, "'" + labels_path + "': the brainordinate table");
  std::map<PlaceKey, std::int64_t> atlas_index;
  std::map<std::int64_t, std::int64_t> label_size;
  for (const auto& m : atlas_brain.brain.models) {
    const std::int64_t s = m.surface ? structure_number.emplace(m.structure, structure_number.size()).first->second : -1;
    for (std::int64_t i = 0; i < m.count; ++i) {
      const std::int64_t a = m.offset + i;
      if (!atlas_index.emplace(PlaceKey{s, m.places[static_cast<std::size_t>(i)]}, a).second)
        fail(ErrorKind::data, "'" + labels_path + "': " + place_name(atlas_brain.brain, a) + " is listed twice");
      if (label[static_cast<std::size_t>(a)] > 0) ++label_size[label[static_cast<std::size_t>(a)]];
    }
  }
  std::map<std::int64_t, std::int64_t> column_of;  // label -> column in order of first appearance
  for (const auto& m : space.brain.models) {
    const auto s = structure_number.find(m.structure);
    for (std::int64_t i = 0; i < m.count; ++i) {
      const PlaceKey key{m.surface ? (s == structure_number.end() ? -2 : s->second) : -1, m.places[static_cast<std::size_t>(i)]};
      const auto found = atlas_index.find(key);
      if (found == atlas_index.end()) continue;
      const std::int64_t k = label[static_cast<std::size_t>(found->second)];
      if (k <= 0) continue;
      const auto column = column_of.emplace(k, static_cast<std::int64_t>(column_of.size())).first->second;
      runs.add(m.offset + i, column);
    }
  }
  std::map<std::int64_t, std::string> table;
  const std::string* table_source = nullptr;
  if (!options.label_names.empty()) {
    table = read_label_table(options.label_names);
    table_source = &options.label_names;
  } else if (maps.kind == CiftiAxis::Kind::labels) {
    table = maps.maps[map].labels;
    table_source = &labels_path;
  }
  for (const auto& [k, n] : label_size)
    if (!column_of.count(k)) {
      const auto name = table.find(k);
      fail(ErrorKind::data, "label " + std::to_string(k) + (name == table.end() ? "" : " (" + excerpt(name->second) + ")") +
                                " covers " + std::to_string(n) + " brainordinates of '" + labels_path + "', none of them in '" +
                                image.path() + "'");
    }
  if (column_of.empty())
    fail(ErrorKind::data, "no brainordinate of '" + image.path() + "' has a label above 0 in '" + labels_path + "'");
  if (!options.label_names.empty())
    for (const auto& [k, n] : table)
      if (!column_of.count(k))
        fail(ErrorKind::data, "label " + std::to_string(k) + " (" + excerpt(n) + ") of '" + options.label_names +
                                  "' has no brainordinates in '" + labels_path + "'");
  const auto labels = order_columns_by_label(column_of, runs);
  return region_names(labels, table_source ? &table : nullptr, table_source ? *table_source : labels_path);
}

}  // namespace

CiftiHeader read_cifti_header(const ImageFile& file, MemoryBudget& budget) {
  const std::string& path = file.path();
  const std::string* xml = file.cifti_xml();
  if (!xml) fail(ErrorKind::internal, "'" + path + "' has no CIFTI extension");
  budget.take(2 * static_cast<std::uint64_t>(xml->size()), "'" + path + "': the parsed CIFTI header");
  const XmlElement root = parse_xml(*xml, "'" + path + "' (CIFTI header)");
  HeaderReader reader(path, budget);
  if (root.name != "CIFTI") reader.bad(root, "the root element must be <CIFTI>");
  const std::string& version = reader.text(root, "Version");
  if (version != "2" && version != "2.0") reader.bad(root, "CIFTI version " + excerpt(version) + " is not supported (CIFTI-2 only)");
  const XmlElement& matrix = reader.only_child(root, "Matrix");
  CiftiHeader h;
  bool seen[2] = {false, false};
  for (const XmlElement* m : matrix.children_named("MatrixIndicesMap")) {
    const std::string& applies = reader.text(*m, "AppliesToMatrixDimension");
    std::vector<int> dims;
    for (char c : applies) {
      if (c == ',' || is_blank(c)) continue;
      if (c < '0' || c > '9' || dims.size() >= 8)
        reader.bad(*m, "AppliesToMatrixDimension = " + excerpt(applies) + " is not a list of dimensions");
      dims.push_back(c - '0');
    }
    if (dims.empty()) reader.bad(*m, "AppliesToMatrixDimension is empty");
    CiftiAxis axis = reader.axis(*m);
    for (int d : dims) {
      if (d > 1) reader.bad(*m, "dimension " + std::to_string(d) + ": CIFTI matrices of more than two dimensions are not supported");
      if (seen[d]) reader.bad(*m, "dimension " + std::to_string(d) + " is mapped twice");
      seen[d] = true;
      h.axes[static_cast<std::size_t>(d)] = axis;
    }
  }
  for (int d = 0; d < 2; ++d)
    if (!seen[d]) reader.bad(matrix, "no MatrixIndicesMap applies to dimension " + std::to_string(d));
  const ImageHeader& nh = file.header();
  const bool dims_fit = nh.dim[1] == 1 && nh.dim[2] == 1 && nh.dim[3] == 1 && nh.dim[4] == 1 && nh.dim[7] == 1 &&
                        nh.dim[5] == h.axes[0].size && nh.dim[6] == h.axes[1].size;
  if (!dims_fit)
    fail(ErrorKind::parse, "'" + path + "': NIfTI dim is [" + [&] {
      std::string s;
      for (int k = 0; k < 8; ++k) s += (k ? " " : "") + std::to_string(nh.dim[k]);
      return s;
    }() + "] but the CIFTI header describes a " + std::to_string(h.axes[0].size) + " x " + std::to_string(h.axes[1].size) +
                               " matrix (dim[5] x dim[6], the other dimensions 1)");
  return h;
}

series::Series read_cifti_series(ImageFile& image, const CiftiHeader& header, const std::string& labels_path,
                                 const ImageOptions& options, MemoryBudget& budget) {
  const std::string& path = image.path();
  const bool series0 = header.axes[0].kind == CiftiAxis::Kind::series;
  const bool series1 = header.axes[1].kind == CiftiAxis::Kind::series;
  if (series0 == series1) {
    const bool atlas = header.axes[0].kind == CiftiAxis::Kind::labels || header.axes[1].kind == CiftiAxis::Kind::labels;
    fail(ErrorKind::data, "'" + path + "' is a CIFTI file of " + describe(header) +
                              ", not a series; give a dense (.dtseries.nii) or parcellated (.ptseries.nii) series as the image" +
                              (atlas ? " and a label file as the labels" : ""));
  }
  const CiftiAxis& time = header.axes[series0 ? 0 : 1];
  const CiftiAxis& space = header.axes[series0 ? 1 : 0];
  PlaceRuns runs(budget, labels_path.empty() ? path : labels_path);
  std::vector<std::string> names;
  if (space.kind == CiftiAxis::Kind::parcels) {
    if (!labels_path.empty())
      fail(ErrorKind::argument, "'" + path + "' is a parcellated series: its parcels are the regions, so it takes no label file (got '" +
                                    labels_path + "')");
    if (!options.label_names.empty() || !options.label_map.empty())
      fail(ErrorKind::argument, "'" + path + "' is a parcellated series: the options \"label_names\" and \"label_map\" do not apply");
    for (std::int64_t p = 0; p < space.size; ++p) runs.add(p, p);
    names = space.parcel_names;
    std::map<std::string, std::size_t> seen;
    for (std::size_t p = 0; p < names.size(); ++p) {
      check_region_name(names[p], "'" + path + "', parcel " + std::to_string(p + 1));
      if (!seen.emplace(names[p], p).second)
        fail(ErrorKind::data, "'" + path + "': parcels " + std::to_string(seen[names[p]] + 1) + " and " + std::to_string(p + 1) +
                                  " are both named " + excerpt(names[p]));
    }
  } else if (space.kind == CiftiAxis::Kind::brain_models) {
    if (labels_path.empty())
      fail(ErrorKind::argument, "'" + path + "' is a dense series: its regions need a dense label file (a .dlabel.nii, or a "
                                    "dense file of integer labels) on the same brainordinates, and none was given");
    names = dense_regions(image, space, labels_path, options, budget, runs);
  } else {
    fail(ErrorKind::data, "'" + path + "' is a CIFTI file of " + describe(header) + "; critplex reads series against brain models or parcels");
  }
  series::Series s;
  s.values = column_means(image, time.size, space.size, series0, runs, static_cast<std::int64_t>(names.size()), budget);
  s.names = std::move(names);
  if (std::isfinite(options.sampling_interval)) s.sampling_interval = options.sampling_interval;
  else if (time.unit == "SECOND" && time.step > 0 && std::isfinite(time.step)) s.sampling_interval = time.step;
  s.source = path;
  return s;
}

}  // namespace critplex::io
