// Unit checks of the simulated study writers: the NIfTI-1 writer read back by our own
// reader, its refusals, and the bids layout of a small invented study (files, manifests that
// `critplex cohort` reads, nothing left behind on failure). nibabel and the BIDS naming
// rules check the same files from outside in tests/reference/test_simulate_bids.py.
#include <catch2/catch.hpp>

#include <unistd.h>

#include <cmath>
#include <filesystem>

#include "base/error.hpp"
#include "io/files.hpp"
#include "io/nifti.hpp"
#include "io/nifti_write.hpp"
#include "pipeline/cohort.hpp"
#include "pipeline/study.hpp"

using namespace critplex;
namespace fs = std::filesystem;

namespace {

// A fresh temporary folder, removed at the end of the test.
struct TempDir {
  fs::path path;
  TempDir() {
    char tmpl[] = "/tmp/critplex-study-XXXXXX";
    path = mkdtemp(tmpl);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path, ec);
  }
};

// Two regions on a 3 x 2 x 1 grid: label 1 on voxels 0, 1; label 2 on voxels 3, 4, 5.
io::NiftiImage two_region_labels() {
  io::NiftiImage labels;
  labels.dims = {3, 2, 1, 1};
  labels.voxel_mm = {2.0, 2.0, 3.0};
  labels.origin_mm = {-2.0, -1.0, 0.0};
  labels.storage = io::NiftiStorage::uint8;
  labels.values = {1, 1, 0, 2, 2, 2};
  return labels;
}

io::NiftiImage series_on(const io::NiftiImage& labels, io::NiftiStorage storage) {
  io::NiftiImage image = labels;
  image.dims[3] = 4;
  image.repetition_time = 1.5;
  image.storage = storage;
  image.values.clear();
  for (int t = 0; t < 4; ++t)
    for (int v = 0; v < 6; ++v) image.values.push_back(100.0 + 10.0 * t + v + 0.25 * (t * v % 3));
  return image;
}

}  // namespace

TEST_CASE("NIfTI-1 writer: float32 and scaled int16 read back as regional means", "[io]") {
  TempDir dir;
  const auto labels = two_region_labels();
  io::write_nifti1((dir.path / "labels.nii.gz").string(), labels);
  for (auto storage : {io::NiftiStorage::float32, io::NiftiStorage::int16_scaled}) {
    const auto image = series_on(labels, storage);
    const std::string path = (dir.path / "bold.nii").string();  // plain .nii too
    io::write_nifti1(path, image);
    const auto s = io::read_image_series(path, (dir.path / "labels.nii.gz").string(), {});
    REQUIRE(s.frames() == 4);
    REQUIRE(s.regions() == 2);
    CHECK(s.sampling_interval == Approx(1.5));
    // Scaled int16: slope = range / 64000, so each voxel is off by at most slope / 2.
    const double tolerance = storage == io::NiftiStorage::float32 ? 1e-4 : (139.5 - 100.0) / 64000.0;
    for (int t = 0; t < 4; ++t) {
      const auto v = [&](int k) { return image.values[static_cast<std::size_t>(6 * t + k)]; };
      CHECK(std::fabs(s.values(t, 0) - (v(0) + v(1)) / 2.0) <= tolerance);
      CHECK(std::fabs(s.values(t, 1) - (v(3) + v(4) + v(5)) / 3.0) <= tolerance);
    }
  }
}

TEST_CASE("NIfTI-1 writer: reproducible bytes and clear refusals", "[io]") {
  const auto labels = two_region_labels();
  const std::string a = io::gzip_bytes(io::encode_nifti1(labels));
  CHECK(a == io::gzip_bytes(io::encode_nifti1(labels)));  // no time stamp in the gzip header
  CHECK(io::encode_nifti1(labels).size() == 352 + 6);

  auto refused = [](io::NiftiImage image, const std::string& part) {
    try {
      (void)io::encode_nifti1(image);
      FAIL("accepted");
    } catch (const Error& e) {
      CHECK(e.kind() == ErrorKind::argument);
      CHECK_THAT(e.what(), Catch::Contains(part));
    }
  };
  auto wrong_count = labels;
  wrong_count.values.pop_back();
  refused(wrong_count, "5 values for a grid of 6 voxels");
  auto not_integer = labels;
  not_integer.values[2] = 0.5;
  refused(not_integer, "not an integer");
  auto too_large = labels;
  too_large.values[2] = 256;
  refused(too_large, "[0, 255]");
  auto no_tr = series_on(labels, io::NiftiStorage::float32);
  no_tr.repetition_time = 0;
  refused(no_tr, "repetition time");
  auto nan = series_on(labels, io::NiftiStorage::float32);
  nan.values[7] = std::nan("");
  refused(nan, "value 7 is not finite");
}

TEST_CASE("bids layout: files, manifest rows cohort reads, the tsv layout's series", "[pipeline]") {
  TempDir dir;
  const Json model = {{"regions", 6}, {"frames", 40}, {"modules", 2}, {"seed", 4},
                      {"groups", {{{"name", "rested"}, {"subjects", 1}}, {{"name", "deprived"}, {"subjects", 1}}}}};
  Json bids_options = model;
  bids_options["layout"] = "bids";
  const std::string root = (dir.path / "bids").string();
  const Json summary = pipeline::write_simulated_study(bids_options, root);
  CHECK(summary["layout"] == "bids");
  const std::string deriv = root + "/derivatives/critplex-simulate";
  for (const char* f : {"/dataset_description.json", "/participants.tsv", "/README", "/.bidsignore", "/manifest.tsv",
                        "/cohort_config.json", "/model.json"})
    CHECK(fs::exists(root + f));
  CHECK(fs::exists(deriv + "/space-sleeplab_desc-demoatlas_dseg.nii.gz"));
  CHECK(fs::exists(deriv + "/sub-rested01/func/sub-rested01_task-rest_space-sleeplab_desc-preproc_bold.nii.gz"));
  CHECK(fs::exists(deriv + "/sub-deprived01/func/sub-deprived01_task-rest_desc-confounds_timeseries.tsv"));
  CHECK_FALSE(fs::exists(root + ".partial-" + std::to_string(::getpid())));

  const auto rows = pipeline::read_manifest(root + "/manifest.tsv");
  REQUIRE(rows.size() == 2);
  CHECK(rows[0].subject == "rested01");
  CHECK(rows[0].label_names == deriv + "/space-sleeplab_desc-demoatlas_dseg.tsv");

  // The image's regional means are 10 x the tsv layout's series plus a baseline.
  const std::string tsv_root = (dir.path / "tsv").string();
  pipeline::write_simulated_study(model, tsv_root);
  const auto plain = io::read_series(tsv_root + "/timeseries/sub-rested01_timeseries.tsv", Json::object());
  io::ImageOptions names;
  names.label_names = rows[0].label_names;
  const auto from_image = io::read_image_series(rows[0].image, rows[0].labels, names);
  REQUIRE(from_image.names == plain.names);
  CHECK(from_image.sampling_interval == Approx(0.8));
  for (Eigen::Index r = 0; r < plain.regions(); ++r) {
    const Eigen::VectorXd diff = from_image.values.col(r) - 10.0 * plain.values.col(r);
    CHECK(diff.maxCoeff() - diff.minCoeff() < 0.1);  // a constant baseline, up to int16 rounding
  }
}

TEST_CASE("bids layout: sessions, refusals, nothing left behind", "[pipeline]") {
  TempDir dir;
  const Json model = {{"regions", 4}, {"frames", 20}, {"modules", 2}, {"layout", "bids"}, {"sessions", 2}, {"block", 1},
                      {"groups", {{{"name", "a"}, {"subjects", 1}}}}};
  const std::string root = (dir.path / "sessions").string();
  pipeline::write_simulated_study(model, root);
  const std::string func = root + "/derivatives/critplex-simulate/sub-a01/ses-02/func/";
  CHECK(fs::exists(func + "sub-a01_ses-02_task-rest_space-sleeplab_desc-preproc_bold.nii.gz"));
  CHECK(fs::exists(root + "/manifest_ses-01.tsv"));
  CHECK(fs::exists(root + "/manifest_ses-02.tsv"));
  CHECK_FALSE(fs::exists(root + "/manifest.tsv"));

  auto refused = [&](const Json& options, const std::string& where, const std::string& part) {
    try {
      pipeline::write_simulated_study(options, where);
      FAIL("accepted");
    } catch (const Error& e) {
      CHECK_THAT(e.what(), Catch::Contains(part));
    }
  };
  refused(model, root, "exists and is not an empty folder");
  refused({{"sessions", 2}}, (dir.path / "x").string(), "need \"layout\": \"bids\"");
  refused({{"layout", "bids"}, {"block", 9}}, (dir.path / "x").string(), "\"block\" must be in [1, 8]");
  refused({{"layout", "nested"}}, (dir.path / "x").string(), "layout");
  // A model error is found before anything is written.
  refused({{"layout", "bids"}, {"regions", 1}}, (dir.path / "y").string(), "regions must be at least 2");
  CHECK_FALSE(fs::exists(dir.path / "y"));
  for (const auto& entry : fs::directory_iterator(dir.path))
    CHECK(entry.path().filename().string().find(".partial-") == std::string::npos);
}
