// Unit tests of the io stage: time series and matrix files, and their errors.
#include <catch2/catch.hpp>

#include <cstdio>
#include <fstream>
#include <unistd.h>

#include "base/error.hpp"
#include "base/exact.hpp"
#include "base/options.hpp"
#include "io/files.hpp"
#include "check_error.hpp"

using namespace critplex;

namespace {
// A file in a fresh temporary folder, removed at the end of the test.
struct TempFile {
  std::string path;
  TempFile(const std::string& name, const std::string& bytes) {
    char tmpl[] = "/tmp/critplex-io-XXXXXX";
    path = std::string(mkdtemp(tmpl)) + "/" + name;
    std::ofstream(path, std::ios::binary) << bytes;
  }
  ~TempFile() {
    std::remove(path.c_str());
    ::rmdir(path.substr(0, path.rfind('/')).c_str());
  }
};

std::string npy_header(const std::string& dict) {
  std::string h = dict;
  std::size_t total = 10 + h.size() + 1;
  h.append((64 - total % 64) % 64, ' ');
  h.push_back('\n');
  std::string out("\x93NUMPY\x01\x00", 8);
  out.push_back(static_cast<char>(h.size() & 0xff));
  out.push_back(static_cast<char>(h.size() >> 8));
  return out + h;
}
}  // namespace

TEST_CASE("TSV with header: time down the rows, regions across", "[io]") {
  TempFile f("ts.tsv", "a\tb\tc\n1\t2\t3\n2\t1\t5\n3\t5\t4\n4\t3\t1\n");
  auto s = io::read_series(f.path, Json::object());
  REQUIRE(s.frames() == 4);
  REQUIRE(s.regions() == 3);
  CHECK(s.names == std::vector<std::string>{"a", "b", "c"});
  CHECK(s.values(3, 2) == 1.0);
}

TEST_CASE("CSV with quoted names and CRLF; whitespace text without header", "[io]") {
  TempFile csv("ts.csv", "\"x\",\"y\"\r\n1,2\r\n2,1\r\n3,3\r\n");
  auto s = io::read_series(csv.path, Json::object());
  CHECK(s.names == std::vector<std::string>{"x", "y"});
  TempFile txt("ts.txt", "1 2\n 2   1\n3\t3\n");
  auto t = io::read_series(txt.path, Json::object());
  CHECK(t.names == std::vector<std::string>{"R1", "R2"});
  CHECK(t.values(1, 0) == 2.0);
}

TEST_CASE("NPY float64 C order and float32 Fortran order", "[io]") {
  // 3 frames x 2 regions: [[1,2],[3,5],[4,1]]
  double c_order[6] = {1, 2, 3, 5, 4, 1};
  std::string a = npy_header("{'descr': '<f8', 'fortran_order': False, 'shape': (3, 2), }") +
                  std::string(reinterpret_cast<const char*>(c_order), sizeof c_order);
  TempFile fa("a.npy", a);
  auto s = io::read_series(fa.path, Json::object());
  CHECK(s.values(1, 1) == 5.0);
  float f_order[6] = {1, 3, 4, 2, 5, 1};
  std::string b = npy_header("{'descr': '<f4', 'fortran_order': True, 'shape': (3, 2), }") +
                  std::string(reinterpret_cast<const char*>(f_order), sizeof f_order);
  TempFile fb("b.npy", b);
  auto t = io::read_series(fb.path, Json::object());
  CHECK(t.values == s.values);
}

TEST_CASE("bad time series files name the file and the place", "[io]") {
  CHECK_ERROR_KIND_WITH(io::read_series("/nonexistent/x.tsv", Json::object()), ErrorKind::io, Catch::Contains("cannot open '/nonexistent/x.tsv'"));
  TempFile empty("e.tsv", "");
  CHECK_ERROR_KIND_WITH(io::read_series(empty.path, Json::object()), ErrorKind::parse, Catch::Contains("is empty"));
  TempFile ragged("r.tsv", "a\tb\n1\t2\n3\n4\t5\n");
  CHECK_ERROR_KIND_WITH(io::read_series(ragged.path, Json::object()), ErrorKind::parse, Catch::Contains("line 3") && Catch::Contains("ragged"));
  TempFile word("w.tsv", "a\tb\n1\t2\n3\tx7\n4\t5\n");
  CHECK_ERROR_KIND_WITH(io::read_series(word.path, Json::object()), ErrorKind::parse,
                    Catch::Contains("line 3, column 2 ('b')") && Catch::Contains("'x7' is not a number"));
  TempFile nan("n.tsv", "a\tb\n1\t2\n3\tnan\n4\t5\n");
  CHECK_ERROR_KIND_WITH(io::read_series(nan.path, Json::object()), ErrorKind::data, Catch::Contains("line 3") && Catch::Contains("not finite"));
  TempFile flat("c.tsv", "a\tb\n1\t2\n3\t2\n4\t2\n");
  CHECK_ERROR_KIND_WITH(io::read_series(flat.path, Json::object()), ErrorKind::data, Catch::Contains("region 'b'") && Catch::Contains("constant"));
  TempFile shortf("s.tsv", "a\tb\n1\t2\n3\t1\n");
  CHECK_ERROR_KIND_WITH(io::read_series(shortf.path, Json::object()), ErrorKind::data, Catch::Contains("at least 3 time points"));
  TempFile one("o.tsv", "a\n1\n2\n3\n");
  CHECK_ERROR_KIND_WITH(io::read_series(one.path, Json::object()), ErrorKind::data, Catch::Contains("at least 2 regions"));
  TempFile trunc("t.npy", std::string("\x93NUMPY\x01\x00\x76\x00{'descr'", 17));
  CHECK_ERROR_KIND_WITH(io::read_series(trunc.path, Json::object()), ErrorKind::parse, Catch::Contains("truncated NPY header"));
  TempFile ints("i.npy", npy_header("{'descr': '<i8', 'fortran_order': False, 'shape': (3, 2), }") + std::string(48, '\0'));
  CHECK_ERROR_KIND_WITH(io::read_series(ints.path, Json::object()), ErrorKind::parse, Catch::Contains("unsupported NPY data type '<i8'"));
}

TEST_CASE("matrices round-trip through TSV, JSON and NPY", "[io]") {
  connectivity::Matrix m;
  m.values.resize(3, 3);
  m.values << 1, 0.1234567890123456789, -0.3, 0.1234567890123456789, 1, 1e-300, -0.3, 1e-300, 1;
  m.names = {"left", "right", "mid"};
  for (std::string fmt : {"tsv", "npy"}) {
    TempFile f("m." + fmt, "");
    io::write_matrix(m, f.path, fmt);
    auto back = io::read_matrix(f.path, Json::object());
    CHECK(back.values == m.values);  // shortest round-trip text keeps every bit
    if (fmt == "tsv") CHECK(back.names == m.names);
  }
  TempFile bad("bad.tsv", "1\t0.5\n0.4\t1\n");
  CHECK_ERROR_KIND_WITH(io::read_matrix(bad.path, Json::object()), ErrorKind::data, Catch::Contains("not symmetric"));
  TempFile rect("rect.tsv", "1\t0.5\t0\n0.5\t1\t0\n");
  CHECK_ERROR_KIND_WITH(io::read_matrix(rect.path, Json::object()), ErrorKind::data, Catch::Contains("not square"));
}

TEST_CASE("options reject unknown keys and wrong types", "[base]") {
  Json j = Json::parse(R"({"format": "tsv", "headr": true})");
  CHECK_ERROR_KIND_WITH(io::read_series("/nonexistent", j), ErrorKind::argument, Catch::Contains("unknown option \"headr\""));
  CHECK_ERROR_KIND_WITH(parse_options("{not json", "test"), ErrorKind::argument, Catch::Contains("not valid JSON"));
  CHECK_ERROR_KIND_WITH(parse_options("[1]", "test"), ErrorKind::argument, Catch::Contains("expected a JSON object"));
}

TEST_CASE("exact decimal text of 128-bit integers", "[base]") {
  // 2^100 = 1267650600228229401496703205376 (exact power of two, common knowledge).
  int128 v = static_cast<int128>(1) << 100;
  CHECK(to_decimal(v) == "1267650600228229401496703205376");
  CHECK(to_decimal(-v) == "-1267650600228229401496703205376");
  CHECK(int128_from_decimal("1267650600228229401496703205376") == v);
  CHECK_ERROR_KIND(int128_from_decimal("999999999999999999999999999999999999999999"), ErrorKind::overflow);
  CHECK_ERROR_KIND(checked_mul(v, v, "test"), ErrorKind::overflow);
}

#include "io/checksum.hpp"

TEST_CASE("SHA-256 test vectors", "[io]") {
  // reference: the NIST FIPS 180-4 examples (values from memory, confirmed with coreutils sha256sum)
  CHECK(io::sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  CHECK(io::sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(io::sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
}
