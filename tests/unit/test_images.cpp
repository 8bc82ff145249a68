// Unit tests of the image readers (core/io: xml, image_file, nifti, cifti): the XML subset,
// NIfTI-1/2 headers in both byte orders, plain and gzip, CIFTI-2 dense and parcellated
// series, and the refusals of headers that declare more than the file holds. Files are
// written byte by byte (image_writer.hpp) with invented values; the means expected here
// are worked out by the plain loops below. Agreement with files from another writer is
// checked against nibabel in tests/reference/test_images_nibabel.py.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <limits>
#include <tuple>

#include "base/error.hpp"
#include "image_writer.hpp"
#include "io/nifti.hpp"
#include "io/xml.hpp"
#include "check_error.hpp"

using namespace critplex;
using image_writer::Image;

namespace {

struct TempDir {
  std::string path;
  TempDir() {
    char tmpl[] = "/tmp/critplex-images-XXXXXX";
    path = mkdtemp(tmpl);
  }
  ~TempDir() { std::filesystem::remove_all(path); }
  std::string file(const std::string& name, const std::string& bytes, bool gzip = false) const {
    const std::string p = path + "/" + name;
    if (gzip) image_writer::write_gzip(p, bytes);
    else image_writer::write_plain(p, bytes);
    return p;
  }
};

// 3 x 2 x 1 voxels, 5 frames; value(v, t) = 10 v + t^2 / 4 - 3 (v = voxel number).
constexpr int voxels = 6, frames = 5;
double value(int v, int t) { return 10.0 * v + t * t / 4.0 - 3.0; }
const std::vector<double> voxel_labels = {2, 2, 0, 7, 7, 7};

Image series_image(int version, bool swap) {
  Image img;
  img.version = version;
  img.swap = swap;
  img.dims = {3, 2, 1, frames};
  std::vector<double> values;
  for (int t = 0; t < frames; ++t)
    for (int v = 0; v < voxels; ++v) values.push_back(value(v, t));
  img.add_values<float>(values);
  return img;
}

Image label_image(const std::vector<double>& labels, int datatype = 4, int version = 1) {
  Image img;
  img.version = version;
  img.dims = {3, 2, 1};
  img.datatype = datatype;
  if (datatype == 2) img.add_values<std::uint8_t>(labels);
  else if (datatype == 4) img.add_values<std::int16_t>(labels);
  else if (datatype == 16) img.add_values<float>(labels);
  else if (datatype == 64) img.add_values<double>(labels);
  return img;
}

double expected_mean(double label, int t) {
  double sum = 0;
  int n = 0;
  for (int v = 0; v < voxels; ++v)
    if (voxel_labels[v] == label) sum += value(v, t), ++n;
  return sum / n;
}

void check_means(const series::Series& s) {
  REQUIRE(s.frames() == frames);
  REQUIRE(s.regions() == 2);
  CHECK(s.names == std::vector<std::string>{"label-2", "label-7"});
  for (int t = 0; t < frames; ++t) {
    CHECK(s.values(t, 0) == Approx(expected_mean(2, t)).epsilon(1e-12));
    CHECK(s.values(t, 1) == Approx(expected_mean(7, t)).epsilon(1e-12));
  }
  CHECK(s.sampling_interval == Approx(0.5));
}

io::ImageOptions options() { return {}; }

}  // namespace

TEST_CASE("XML subset: elements, attributes, text, entities, comments, CDATA", "[images][xml]") {
  const std::string doc =
      "\xEF\xBB\xBF<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<!-- a comment -->\n<?note skipped?>\n"
      "<Root a='1' b=\"x &amp; y &lt;&gt; &quot;&apos;\">\r\n  <Child k=\"&#65;&#x42;\tc\">one &#x263A; two</Child>\n"
      "  <Empty/><Child><![CDATA[<raw> & text]]></Child>\n</Root>\n<!-- after -->";
  const auto root = io::parse_xml(doc, "test.xml");
  CHECK(root.name == "Root");
  CHECK(*root.attribute("a") == "1");
  CHECK(*root.attribute("b") == "x & y <> \"'");
  CHECK(root.attribute("missing") == nullptr);
  REQUIRE(root.children.size() == 3);
  const auto kids = root.children_named("Child");
  REQUIRE(kids.size() == 2);
  CHECK(*kids[0]->attribute("k") == "AB c");  // a tab in an attribute becomes a space
  CHECK(kids[0]->text == "one \xE2\x98\xBA two");
  CHECK(kids[1]->text == "<raw> & text");
  CHECK(root.text == "\n  \n  \n");  // CR LF became LF
  CHECK(kids[0]->line == 5);
  CHECK(kids[0]->column == 3);
}

TEST_CASE("XML errors name the source, the line and the column", "[images][xml]") {
  const std::vector<std::pair<std::string, std::string>> cases = {
      {"<a><b></a>", "line 1, column 7: </a> does not close <b>"},
      {"<a>\n<b x='1' x='2'/></a>", "line 2, column 10: attribute 'x' appears twice"},
      {"<!DOCTYPE a [<!ENTITY e 'x'>]><a/>", "DOCTYPE"},
      {"<a>&e;</a>", "unknown entity '&e;'"},
      {"<a>&#0;</a>", "not an XML character"},
      {"<a>&#x110000;</a>", "past U+10FFFF"},
      {"<a>x &amp y</a>", "'&' must start an entity"},
      {"<a b='<'/>", "'<' inside the value"},
      {"<a/><b/>", "content after the end of the root element"},
      {"<a>\n\n  <!-- x -- y --></a>", "line 3, column 10: '--' inside a comment"},
      {"<a><!-- open", "not closed by -->"},
      {"<a>", "<a> is never closed"},
      {"<a b=1/>", "must be quoted"},
      {"<a b='1'c='2'/>", "expected white space"},
      {"<?xml version=\"1.0\" encoding=\"ISO-8859-1\"?><a/>", "encoding 'ISO-8859-1' is not supported"},
      {"<a/><?xml version=\"1.0\"?>", "only at the very start"},
      {"<a>\xC3\x28</a>", "line 1, column 4: the bytes here are not valid UTF-8"},
      {"<a>\xED\xA0\x80</a>", "not valid UTF-8"},  // an encoded surrogate
      {"<a>\x01</a>", "character U+01 is not allowed"},
      {"<a>]]></a>", "']]>' is not allowed"},
      {"", "no root element"},
      {"text", "expected the root element"},
  };
  for (const auto& [doc, fragment] : cases) {
    INFO(doc);
    CHECK_ERROR_KIND_WITH(io::parse_xml(doc, "'h.nii' (CIFTI header)"), ErrorKind::parse, Catch::Contains("'h.nii' (CIFTI header): XML line") &&
                                                                        Catch::Contains(fragment));
  }
}

TEST_CASE("XML limits: depth, elements, attributes and size", "[images][xml]") {
  io::XmlLimits limits;
  limits.max_depth = 4;
  CHECK_NOTHROW(io::parse_xml("<a><a><a><a/></a></a></a>", "x", limits));
  CHECK_ERROR_KIND_WITH(io::parse_xml("<a><a><a><a><a/></a></a></a></a>", "x", limits), ErrorKind::parse, Catch::Contains("nested more than 4 deep"));
  // Deep nesting is refused at the limit, without recursing further (no stack overflow).
  std::string deep;
  for (int k = 0; k < 100000; ++k) deep += "<a>";
  CHECK_ERROR_KIND_WITH(io::parse_xml(deep, "x"), ErrorKind::parse, Catch::Contains("nested more than 32 deep"));
  limits = {};
  limits.max_elements = 3;
  CHECK_ERROR_KIND_WITH(io::parse_xml("<a><b/><b/><b/></a>", "x", limits), ErrorKind::parse, Catch::Contains("more than 3 elements"));
  limits = {};
  limits.max_attributes = 2;
  CHECK_ERROR_KIND_WITH(io::parse_xml("<a x='1' y='2' z='3'/>", "x", limits), ErrorKind::parse, Catch::Contains("more than 2 attributes"));
  limits = {};
  limits.max_bytes = 10;
  CHECK_ERROR_KIND_WITH(io::parse_xml("<a>0123456789</a>", "x", limits), ErrorKind::parse, Catch::Contains("more than the limit of 10"));
  CHECK(io::is_utf8("plain \xE2\x98\xBA"));
  CHECK_FALSE(io::is_utf8("\xC0\xAF"));  // overlong '/'
  CHECK_FALSE(io::is_utf8("\xF4\x90\x80\x80"));  // past U+10FFFF
}

TEST_CASE("NIfTI-1 and NIfTI-2, plain, gzip and big-endian give the same regional means", "[images][nifti]") {
  TempDir dir;
  const auto labels = dir.file("atlas.nii", label_image(voxel_labels).bytes());
  for (int version : {1, 2})
    for (bool swap : {false, true})
      for (bool gzip : {false, true}) {
        INFO("NIfTI-" << version << (swap ? " big-endian" : "") << (gzip ? " gzip" : ""));
        const auto image = dir.file("bold.nii" + std::string(gzip ? ".gz" : ""), series_image(version, swap).bytes(), gzip);
        check_means(io::read_image_series(image, labels, options()));
      }
  // Labels as uint8, float32 and float64, and from a NIfTI-2 file, give the same regions.
  const auto image = dir.file("bold.nii", series_image(1, false).bytes());
  for (int type : {2, 16, 64}) check_means(io::read_image_series(image, dir.file("l.nii", label_image(voxel_labels, type).bytes()), options()));
  check_means(io::read_image_series(image, dir.file("l2.nii", label_image(voxel_labels, 4, 2).bytes()), options()));
}

TEST_CASE("NIfTI scaling and extensions before the data", "[images][nifti]") {
  TempDir dir;
  Image img = series_image(1, false);
  img.slope = 2.0;
  img.intercept = 1.0;
  img.extensions = {{6, "a comment extension"}, {4, std::string(40, 'x')}};
  const auto image = dir.file("bold.nii", img.bytes());
  const auto s = io::read_image_series(image, dir.file("atlas.nii", label_image(voxel_labels).bytes()), options());
  for (int t = 0; t < frames; ++t) CHECK(s.values(t, 1) == Approx(2.0 * expected_mean(7, t) + 1.0).epsilon(1e-12));
}

TEST_CASE("NIfTI headers that declare more than the file holds are refused before any allocation", "[images][nifti][hardening]") {
  TempDir dir;
  const auto good_labels = dir.file("atlas.nii", label_image(voxel_labels).bytes());
  const auto good_image = dir.file("bold.nii", series_image(1, false).bytes());
  struct Case {
    std::string name;
    Image image;
    bool as_labels;
    std::string fragment;
  };
  std::vector<Case> cases;
  {  // a 480-byte label image declaring 32767^3 voxels
    Image l = label_image(voxel_labels);
    l.dims = {32767, 32767, 32767};
    l.data.resize(480 - 352);
    cases.push_back({"huge_grid.nii", l, true, "header fields dim and vox_offset: the header declares 32767x32767x32767 values"});
  }
  {  // NIfTI-2 dimensions whose product overflows 64 bits
    Image l = label_image(voxel_labels, 4, 2);
    l.dims = {std::int64_t{1} << 40, std::int64_t{1} << 40, 1};
    cases.push_back({"overflow.nii", l, true, "passes 2^62"});
  }
  {
    Image l = label_image(voxel_labels);
    l.vox_offset = 1e30;
    cases.push_back({"offset.nii", l, true, "header field vox_offset: 1.0000000150474662e+30 is not a whole number"});
  }
  {
    Image l = label_image(voxel_labels);
    l.vox_offset = std::numeric_limits<double>::quiet_NaN();
    cases.push_back({"nan_offset.nii", l, true, "vox_offset: NaN is not a whole number"});
  }
  {
    Image l = label_image(voxel_labels);
    l.vox_offset = 1 << 30;
    cases.push_back({"far_offset.nii", l, true, "from byte 1073741824), but the file has"});
  }
  {
    Image l = label_image(voxel_labels);
    l.vox_offset = 200;
    cases.push_back({"inside.nii", l, true, "vox_offset: 200 points inside the header"});
  }
  {
    Image l = label_image(voxel_labels);
    l.extensions = {{6, "comment"}};
    l.esize_override = 0x7ffffff0;
    cases.push_back({"esize.nii", l, true, "header field extension 1 esize: 2147483632 at byte 352 does not fit"});
  }
  {
    Image l = label_image(voxel_labels);
    l.extensions = {{6, "comment"}};
    l.esize_override = -16;
    cases.push_back({"negative_esize.nii", l, true, "extension 1 esize: -16"});
  }
  {
    Image l = label_image(voxel_labels);
    l.bitpix = 8;
    cases.push_back({"bitpix.nii", l, true, "header field bitpix: 8 does not match datatype 4"});
  }
  {
    Image l = label_image(voxel_labels);
    l.dims = {3, -2, 1};
    cases.push_back({"negative_dim.nii", l, true, "header field dim[2]: -2 is not positive"});
  }
  {
    Image i = series_image(1, false);
    i.data.resize(i.data.size() - 4);
    cases.push_back({"short_series.nii", i, false, "but the file has"});
  }
  for (const auto& c : cases) {
    INFO(c.name);
    const auto path = dir.file(c.name, c.image.bytes());
    CHECK_ERROR_KIND_WITH(io::read_image_series(c.as_labels ? good_image : path, c.as_labels ? path : good_labels, options()), ErrorKind::parse,
                      Catch::Contains("'" + path + "'") && Catch::Contains(c.fragment));
  }
}

TEST_CASE("labels must be whole numbers from 0 to 2^53: no wrapped or rounded region names", "[images][nifti][hardening]") {
  TempDir dir;
  const auto image = dir.file("bold.nii", series_image(1, false).bytes());
  struct Case {
    std::vector<double> labels;
    int datatype;
    std::string fragment;
  };
  const std::vector<Case> cases = {
      {{2, 2, 0, 7, 7, 1e30}, 16, "voxel (2, 1, 0) holds 1.0000000150474662e+30, not an integer label"},
      {{2, 2, 0, 7, -1, 7}, 16, "voxel (1, 1, 0) holds -1, not an integer label"},
      {{2, 2.5, 0, 7, 7, 7}, 64, "voxel (1, 0, 0) holds 2.5"},
      {{std::numeric_limits<double>::quiet_NaN(), 2, 0, 7, 7, 7}, 64, "voxel (0, 0, 0) holds NaN"},
      {{2, 2, 0, 7, 7, 9007199254740994.0}, 64, "holds 9007199254740994"},
  };
  for (const auto& c : cases) {
    INFO(c.fragment);
    const auto labels = dir.file("atlas.nii", label_image(c.labels, c.datatype).bytes());
    CHECK_ERROR_KIND_WITH(io::read_image_series(image, labels, options()), ErrorKind::data, Catch::Contains("'" + labels + "'") && Catch::Contains(c.fragment));
  }
  // 64-bit integer labels are checked before any conversion.
  Image l = label_image({}, 1024);
  for (std::int64_t v : {std::int64_t{2}, std::int64_t{2}, std::int64_t{0}, std::int64_t{7}, std::int64_t{7}, std::int64_t{1} << 60})
    l.data.append(reinterpret_cast<const char*>(&v), 8);
  l.datatype = 1024;
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, dir.file("int64.nii", l.bytes()), options()), ErrorKind::data,
                    Catch::Contains("holds 1152921504606846976, not an integer label"));
  Image u = label_image({}, 1280);
  u.datatype = 1280;
  for (std::uint64_t v : {2ull, 2ull, 0ull, 7ull, 7ull, ~0ull}) u.data.append(reinterpret_cast<const char*>(&v), 8);
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, dir.file("uint64.nii", u.bytes()), options()), ErrorKind::data,
                    Catch::Contains("holds 18446744073709551615, not an integer label"));
  // A label as large as 2^53 is still exact.
  const auto big = dir.file("big.nii", label_image({2, 2, 0, 7, 7, 9007199254740992.0}, 64).bytes());
  const auto s = io::read_image_series(image, big, options());
  CHECK(s.names.back() == "label-9007199254740992");
}

TEST_CASE("gzip images stream; a short stream names the frame; the budget bounds what is held", "[images][nifti][hardening]") {
  TempDir dir;
  const auto labels = dir.file("atlas.nii.gz", label_image(voxel_labels).bytes(), true);
  Image img = series_image(1, false);
  img.data.resize(img.data.size() / 2);  // 2.5 of 5 frames
  const auto image = dir.file("short.nii.gz", img.bytes(), true);
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, labels, options()), ErrorKind::parse,
                    Catch::Contains("'" + image + "': the file ends inside frame 3 of 5"));
  // A compressed label image declaring 2^31 voxels holding only six: refused when the data
  // run out, having held no more than was decoded.
  Image l = label_image(voxel_labels);
  l.dims = {2048, 1024, 1024};
  const auto huge = dir.file("huge.nii.gz", l.bytes(), true);
  Image series = series_image(1, false);
  series.dims = {2048, 1024, 1024, 2};
  series.data.clear();
  const auto huge_image = dir.file("huge_bold.nii.gz", series.bytes(), true);
  CHECK_ERROR_KIND_WITH(io::read_image_series(huge_image, huge, options()), ErrorKind::parse, Catch::Contains("'" + huge + "': the file ends inside the labels"));

  // 5 frames x 2 regions x 16 bytes fit in 1 MiB; a frame count past it does not.
  io::ImageOptions small;
  small.memory_budget = 1 << 20;
  const auto plain_labels = dir.file("atlas.nii", label_image(voxel_labels).bytes());
  check_means(io::read_image_series(dir.file("bold.nii", series_image(1, false).bytes()), plain_labels, small));
  Image many = series_image(1, false);
  many.dims = {3, 2, 1, 32767, 4};
  many.data.clear();
  const auto many_path = dir.file("many.nii.gz", many.bytes(), true);
  try {
    io::read_image_series(many_path, plain_labels, small);
    FAIL("no error");
  } catch (const Error& e) {
    CHECK(e.kind() == ErrorKind::budget);
    CHECK_THAT(e.what(), Catch::Contains("'" + many_path + "': the regional series (131068 frames x 2 regions)") &&
                             Catch::Contains("past the image memory budget of 1 MiB") && Catch::Contains("memory_budget_mb"));
  }
}

TEST_CASE("NIfTI label tables and mismatched inputs", "[images][nifti]") {
  TempDir dir;
  const auto image = dir.file("bold.nii", series_image(1, false).bytes());
  const auto labels = dir.file("atlas.nii", label_image(voxel_labels).bytes());
  io::ImageOptions o;
  o.label_names = dir.file("names.tsv", "index\tname\n7\tright\n2\tleft\n");
  const auto s = io::read_image_series(image, labels, o);
  CHECK(s.names == std::vector<std::string>{"left", "right"});
  // A table that cannot be read as text is a parse error; names that do not fit the
  // image are data errors.
  const std::vector<std::tuple<std::string, ErrorKind, std::string>> bad_tables = {
      {"2\tleft\n7\tleft\n", ErrorKind::data, "labels 2 and 7 are both named 'left'"},
      {"2\tleft\n7\tri\x01ght\n", ErrorKind::data, "line 2: the region name 'ri\x01ght' holds a control character"},
      {"2\tleft\n7\t\xff\xfe\n", ErrorKind::parse, "line 2: not valid UTF-8"},
      {"2\tleft\n99999999999999999999\tx\n", ErrorKind::parse, "line 2: label index '99999999999999999999' is not a whole number"},
      {"2\tleft\n", ErrorKind::data, "label 7 (3 voxels in '" + labels + "') is missing from"},
      {"2\tleft\n7\tright\n9\tnowhere\n", ErrorKind::data, "label 9 ('nowhere') of"},
  };
  for (const auto& [table, kind, fragment] : bad_tables) {
    INFO(fragment);
    o.label_names = dir.file("bad.tsv", table);
    CHECK_ERROR_KIND_WITH(io::read_image_series(image, labels, o), kind, Catch::Contains(fragment));
  }
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, "", options()), ErrorKind::argument, Catch::Contains("needs a label image") || Catch::Contains("need a label image"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, dir.path, options()), ErrorKind::io, Catch::Contains("is a folder"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(dir.path + "/none.nii", labels, options()), ErrorKind::io, Catch::Contains("cannot open") && Catch::Contains("none.nii"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(labels, labels, options()), ErrorKind::data, Catch::Contains("is not a 4-D series"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, dir.file("zero.nii", label_image({0, 0, 0, 0, 0, 0}).bytes()), options()), ErrorKind::data,
                    Catch::Contains("no labelled voxels"));
  Image other = label_image(voxel_labels);
  other.dims = {2, 3, 1};
  CHECK_ERROR_KIND_WITH(io::read_image_series(image, dir.file("other.nii", other.bytes()), options()), ErrorKind::data, Catch::Contains("grids differ"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(dir.file("text.nii", std::string(400, 'x')), labels, options()), ErrorKind::parse,
                    Catch::Contains("is not a NIfTI image"));
}

namespace {

// A dense series on 3 surface vertices and 2 voxels, 4 frames, series on dimension 0.
const char* dense_models =
    "<MatrixIndicesMap AppliesToMatrixDimension=\"1\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_BRAIN_MODELS\">"
    "<BrainModel IndexOffset=\"0\" IndexCount=\"3\" ModelType=\"CIFTI_MODEL_TYPE_SURFACE\" "
    "BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\" SurfaceNumberOfVertices=\"5\"><VertexIndices>0 1 3</VertexIndices></BrainModel>"
    "<Volume VolumeDimensions=\"2,2,2\"><TransformationMatrixVoxelIndicesIJKtoXYZ MeterExponent=\"-3\">"
    "2 0 0 -1\n0 2 0 -1\n0 0 2 -1\n0 0 0 1</TransformationMatrixVoxelIndicesIJKtoXYZ></Volume>"
    "<BrainModel IndexOffset=\"3\" IndexCount=\"2\" ModelType=\"CIFTI_MODEL_TYPE_VOXELS\" "
    "BrainStructure=\"CIFTI_STRUCTURE_THALAMUS_LEFT\"><VoxelIndicesIJK>0 1 1\n1 0 0</VoxelIndicesIJK></BrainModel>"
    "</MatrixIndicesMap>";

std::string cifti_xml(const std::string& maps) {
  return "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<CIFTI Version=\"2\"><Matrix>" + maps + "</Matrix></CIFTI>";
}

std::string series_map(int dimension, int points) {
  return "<MatrixIndicesMap AppliesToMatrixDimension=\"" + std::to_string(dimension) +
         "\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_SERIES\" NumberOfSeriesPoints=\"" + std::to_string(points) +
         "\" SeriesExponent=\"-3\" SeriesStart=\"0\" SeriesStep=\"720\" SeriesUnit=\"SECOND\"/>";
}

constexpr int dense_frames = 4, brainordinates = 5;
double dense_value(int b, int t) { return 1.0 + b * b + 3.0 * t + (b == 2 ? t * t : 0); }

std::vector<double> dense_values() {
  std::vector<double> v;  // frames vary fastest
  for (int b = 0; b < brainordinates; ++b)
    for (int t = 0; t < dense_frames; ++t) v.push_back(dense_value(b, t));
  return v;
}

// The atlas lists the voxels first and one more vertex (4) than the series; labels:
// voxel (1,0,0) -> 5, voxel (0,1,1) -> 2, vertex 3 -> 2, vertex 1 -> 5, vertex 0 -> 0, vertex 4 -> 9.
const char* atlas_models =
    "<MatrixIndicesMap AppliesToMatrixDimension=\"1\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_BRAIN_MODELS\">"
    "<Volume VolumeDimensions=\"2,2,2\"><TransformationMatrixVoxelIndicesIJKtoXYZ MeterExponent=\"-3\">"
    "2 0 0 -1 0 2 0 -1 0 0 2 -1 0 0 0 1</TransformationMatrixVoxelIndicesIJKtoXYZ></Volume>"
    "<BrainModel IndexOffset=\"0\" IndexCount=\"2\" ModelType=\"CIFTI_MODEL_TYPE_VOXELS\" "
    "BrainStructure=\"CIFTI_STRUCTURE_THALAMUS_LEFT\"><VoxelIndicesIJK>1 0 0 0 1 1</VoxelIndicesIJK></BrainModel>"
    "<BrainModel IndexOffset=\"2\" IndexCount=\"4\" ModelType=\"CIFTI_MODEL_TYPE_SURFACE\" "
    "BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\" SurfaceNumberOfVertices=\"5\"><VertexIndices>3 1 0 4</VertexIndices></BrainModel>"
    "</MatrixIndicesMap>";
const std::vector<double> atlas_labels = {5, 2, 2, 5, 0, 9};

std::string label_map_xml(const std::string& table) {
  return "<MatrixIndicesMap AppliesToMatrixDimension=\"0\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_LABELS\">"
         "<NamedMap><MapName>parcellation</MapName><LabelTable>" + table + "</LabelTable></NamedMap></MatrixIndicesMap>";
}
const char* full_table =
    "<Label Key=\"0\" Red=\"0\" Green=\"0\" Blue=\"0\" Alpha=\"0\">unlabelled</Label>"
    "<Label Key=\"2\" Red=\"1\" Green=\"0\" Blue=\"0\" Alpha=\"1\"> motor &amp; sensory </Label>"
    "<Label Key=\"5\" Red=\"0\" Green=\"1\" Blue=\"0\" Alpha=\"1\">visual</Label>"
    "<Label Key=\"9\" Red=\"0\" Green=\"0\" Blue=\"1\" Alpha=\"1\">unused here</Label>";

}  // namespace

TEST_CASE("CIFTI dense series with a dense label file", "[images][cifti]") {
  TempDir dir;
  const auto series = dir.file("sub-01.dtseries.nii", image_writer::cifti(cifti_xml(series_map(0, dense_frames) + dense_models),
                                                                          dense_frames, brainordinates, dense_values()).bytes());
  // Label 9 sits on vertex 4, which the series lacks: an error, since a region would vanish.
  const auto full = dir.file("atlas.dlabel.nii",
                             image_writer::cifti(cifti_xml(label_map_xml(full_table) + atlas_models), 1, 6, atlas_labels).bytes());
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, full, options()), ErrorKind::data,
                    Catch::Contains("label 9 ('unused here') covers 1 brainordinates of '" + full + "', none of them in '" + series + "'"));
  std::vector<double> labels = atlas_labels;
  labels[5] = 0;
  const auto atlas = dir.file("atlas2.dlabel.nii",
                              image_writer::cifti(cifti_xml(label_map_xml(full_table) + atlas_models), 1, 6, labels).bytes());
  const auto s = io::read_image_series(series, atlas, options());
  // Series brainordinates: 0 = vertex 0 (label 0), 1 = vertex 1 (5), 2 = vertex 3 (2),
  // 3 = voxel (0,1,1) (2), 4 = voxel (1,0,0) (5).
  REQUIRE(s.regions() == 2);
  CHECK(s.names == std::vector<std::string>{"motor & sensory", "visual"});
  for (int t = 0; t < dense_frames; ++t) {
    CHECK(s.values(t, 0) == Approx((dense_value(2, t) + dense_value(3, t)) / 2).epsilon(1e-12));
    CHECK(s.values(t, 1) == Approx((dense_value(1, t) + dense_value(4, t)) / 2).epsilon(1e-12));
  }
  CHECK(s.sampling_interval == Approx(0.72));

  // A scalar file of integer labels works too (names "label-<k>" or from a TSV), and so does
  // the series stored with the brainordinates on dimension 0.
  const std::string scalars =
      "<MatrixIndicesMap AppliesToMatrixDimension=\"0\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_SCALARS\">"
      "<NamedMap><MapName>a</MapName></NamedMap><NamedMap><MapName>b</MapName></NamedMap></MatrixIndicesMap>";
  std::vector<double> two_maps;
  for (double k : labels) two_maps.push_back(-1.5), two_maps.push_back(k);  // map "a" holds no labels
  const auto dscalar = dir.file("atlas.dscalar.nii", image_writer::cifti(cifti_xml(scalars + atlas_models), 2, 6, two_maps).bytes());
  io::ImageOptions o;
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, dscalar, o), ErrorKind::argument, Catch::Contains("has 2 maps ('a', 'b'); choose one"));
  o.label_map = "b";
  CHECK(io::read_image_series(series, dscalar, o).names == std::vector<std::string>{"label-2", "label-5"});
  o.label_map = "1";
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, dscalar, o), ErrorKind::data, Catch::Contains("holds -1.5, not an integer label"));
  o.label_map = "2";
  o.label_names = dir.file("names.tsv", "2\tfront\n5\tback\n");
  CHECK(io::read_image_series(series, dscalar, o).names == std::vector<std::string>{"front", "back"});

  std::string swapped_xml = cifti_xml(series_map(1, dense_frames) + dense_models);
  swapped_xml.replace(swapped_xml.find("AppliesToMatrixDimension=\"1\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_BRAIN"), 28,
                      "AppliesToMatrixDimension=\"0\"");
  std::vector<double> brain_fast;
  for (int t = 0; t < dense_frames; ++t)
    for (int b = 0; b < brainordinates; ++b) brain_fast.push_back(dense_value(b, t));
  const auto swapped = dir.file("swapped.dtseries.nii", image_writer::cifti(swapped_xml, brainordinates, dense_frames, brain_fast).bytes());
  const auto t = io::read_image_series(swapped, atlas, options());
  CHECK((t.values - s.values).cwiseAbs().maxCoeff() < 1e-12);
}

TEST_CASE("CIFTI parcellated series: parcels are the regions, with their names", "[images][cifti]") {
  TempDir dir;
  const std::string parcels =
      "<MatrixIndicesMap AppliesToMatrixDimension=\"1\" IndicesMapToDataType=\"CIFTI_INDEX_TYPE_PARCELS\">"
      "<Surface BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\" SurfaceNumberOfVertices=\"5\"/>"
      "<Parcel Name=\"left visual\"><Vertices BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\">0 1</Vertices></Parcel>"
      "<Parcel Name=\"left motor\"><Vertices BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\">2 3 4</Vertices></Parcel>"
      "<Parcel Name=\"&#xC9;tage 3\"><Vertices BrainStructure=\"CIFTI_STRUCTURE_CORTEX_LEFT\">4</Vertices></Parcel>"
      "</MatrixIndicesMap>";
  std::vector<double> values;
  for (int p = 0; p < 3; ++p)
    for (int t = 0; t < 6; ++t) values.push_back(std::sin(1.0 + p * 7 + t * t));
  const auto path = dir.file("sub-01.ptseries.nii", image_writer::cifti(cifti_xml(series_map(0, 6) + parcels), 6, 3, values).bytes());
  const auto s = io::read_image_series(path, "", options());
  CHECK(s.names == std::vector<std::string>{"left visual", "left motor", "\xC3\x89tage 3"});
  for (int p = 0; p < 3; ++p)
    for (int t = 0; t < 6; ++t) CHECK(s.values(t, p) == static_cast<float>(values[static_cast<std::size_t>(6 * p + t)]));
  CHECK(s.sampling_interval == Approx(0.72));
  CHECK_ERROR_KIND_WITH(io::read_image_series(path, path, options()), ErrorKind::argument, Catch::Contains("is a parcellated series: its parcels are the regions"));

  std::string twice = parcels;
  twice.replace(twice.find("left motor"), 10, "left visual");
  CHECK_ERROR_KIND_WITH(io::read_image_series(dir.file("twice.ptseries.nii", image_writer::cifti(cifti_xml(series_map(0, 6) + twice), 6, 3, values).bytes()), "", options()), ErrorKind::data,
                    Catch::Contains("parcels 1 and 2 are both named 'left visual'"));
}

TEST_CASE("CIFTI errors name the file and the element", "[images][cifti][hardening]") {
  TempDir dir;
  const std::string good = series_map(0, dense_frames) + dense_models;
  auto with = [&](const std::string& from, const std::string& to) {
    std::string x = cifti_xml(good);
    const auto at = x.find(from);
    REQUIRE(at != std::string::npos);
    return x.replace(at, from.size(), to);
  };
  const auto atlas = dir.file("atlas.dlabel.nii",
                              image_writer::cifti(cifti_xml(label_map_xml(full_table) + atlas_models), 1, 6, {5, 2, 2, 5, 0, 0}).bytes());
  const std::vector<std::pair<std::string, std::string>> cases = {
      {with("IndexCount=\"3\"", "IndexCount=\"4\""), "<VertexIndices> at line 2, column"},
      {with("0 1 3</Vertex", "0 1 7</Vertex"), "number 3 = '7' is not a whole number from 0 to 4"},
      {with("0 1 3</Vertex", "0 1 x</Vertex"), "number 3 = 'x'"},
      {with("IndexOffset=\"3\"", "IndexOffset=\"4\""), "<BrainModel> at line 5, column 60: IndexOffset 4 does not follow"},
      {with("1 0 0</Voxel", "1 0 2</Voxel"), "<VoxelIndicesIJK>"},
      {with("SeriesUnit=\"SECOND\"", "SeriesUnit=\"DAY\""), "SeriesUnit = 'DAY'"},
      {with("NumberOfSeriesPoints=\"4\"", "NumberOfSeriesPoints=\"-4\""), "NumberOfSeriesPoints = '-4' is not a whole number"},
      {with("SeriesStep=\"720\"", "SeriesStep=\"nan\""), "SeriesStep = 'nan' is not a finite number"},
      {with("NumberOfSeriesPoints=\"4\"", "NumberOfSeriesPoints=\"5\""), "NIfTI dim is [6 1 1 1 1 4 5 1] but the CIFTI header describes a 5 x 5 matrix"},
      {with("Version=\"2\"", "Version=\"1\""), "CIFTI version '1' is not supported"},
      {with("CIFTI_INDEX_TYPE_BRAIN_MODELS", "CIFTI_INDEX_TYPE_FIBERS"), "IndicesMapToDataType = 'CIFTI_INDEX_TYPE_FIBERS'"},
      {with("AppliesToMatrixDimension=\"1\"", "AppliesToMatrixDimension=\"0\""), "dimension 0 is mapped twice"},
      {with("AppliesToMatrixDimension=\"1\"", "AppliesToMatrixDimension=\"2\""), "more than two dimensions"},
      {with("VolumeDimensions=\"2,2,2\"", "VolumeDimensions=\"2,2\""), "VolumeDimensions = '2,2' is not three"},
      {with("MeterExponent=\"-3\"", "MeterExponent=\"-3\" MeterExponent=\"-3\""), "XML line 2, column"},
      {with("</Matrix>", "</Matrix"), "expected '>'"},
  };
  for (const auto& [xml, fragment] : cases) {
    INFO(fragment);
    const auto path = dir.file("bad.dtseries.nii", image_writer::cifti(xml, dense_frames, brainordinates, dense_values()).bytes());
    CHECK_ERROR_KIND_WITH(io::read_image_series(path, atlas, options()), ErrorKind::parse, Catch::Contains("'" + path + "'") && Catch::Contains(fragment));
  }
  const auto series = dir.file("s.dtseries.nii", image_writer::cifti(cifti_xml(good), dense_frames, brainordinates, dense_values()).bytes());
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, "", options()), ErrorKind::argument, Catch::Contains("is a dense series: its regions need a dense label file"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(atlas, series, options()), ErrorKind::data, Catch::Contains("not a series"));
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, series, options()), ErrorKind::data,
                    Catch::Contains("is a CIFTI file of series x brain models; a label file for a dense series maps label"));
  const auto volume_labels = dir.file("vol.nii", label_image(voxel_labels).bytes());
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, volume_labels, options()), ErrorKind::data, Catch::Contains("is not a CIFTI file"));
  // A label used by the atlas but missing from its table, and meshes that differ.
  std::string table = full_table;
  table.erase(table.find("<Label Key=\"5\""), table.find("<Label Key=\"9\"") - table.find("<Label Key=\"5\""));
  const auto missing = dir.file("missing.dlabel.nii",
                                image_writer::cifti(cifti_xml(label_map_xml(table) + atlas_models), 1, 6, {5, 2, 2, 5, 0, 0}).bytes());
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, missing, options()), ErrorKind::data, Catch::Contains("label 5 is used by the atlas but missing from '" + missing + "'"));
  std::string other_mesh = atlas_models;
  other_mesh.replace(other_mesh.find("SurfaceNumberOfVertices=\"5\""), 27, "SurfaceNumberOfVertices=\"6\"");
  const auto mesh = dir.file("mesh.dlabel.nii",
                             image_writer::cifti(cifti_xml(label_map_xml(full_table) + other_mesh), 1, 6, {5, 2, 2, 5, 0, 0}).bytes());
  CHECK_ERROR_KIND_WITH(io::read_image_series(series, mesh, options()), ErrorKind::data, Catch::Contains("surfaces differ: CIFTI_STRUCTURE_CORTEX_LEFT has 5 vertices"));
}
