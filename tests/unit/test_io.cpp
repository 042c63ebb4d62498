// The io room: atomic writes, netCDF output (read back by our reader and by ncdump), exact
// checkpoints, and the content hashes.

#include <unistd.h>

#include <algorithm>
#include <bit>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <limits>
#include <numbers>
#include <span>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include <gtest/gtest.h>
#include <netcdf.h>

#include "harness/io/atomic_file.hpp"
#include "harness/io/checkpoint.hpp"
#include "harness/io/error.hpp"
#include "harness/io/hash.hpp"
#include "harness/io/netcdf.hpp"

namespace fs = std::filesystem;
using namespace plateau::io;

namespace {

// A fresh directory per test, so that tests may run in parallel.
class IoTest : public ::testing::Test {
 protected:
  void SetUp() override {
    const auto* info = ::testing::UnitTest::GetInstance()->current_test_info();
    dir_ = fs::temp_directory_path() / ("plateau-test-io-" + std::to_string(::getpid()) + "-" +
                                        info->test_suite_name() + "-" + info->name());
    fs::remove_all(dir_);
    fs::create_directories(dir_);
  }
  void TearDown() override { fs::remove_all(dir_); }

  // Every file name under the test directory (recursively), relative to it, sorted.
  [[nodiscard]] std::vector<std::string> entries() const {
    std::vector<std::string> out;
    for (const auto& e : fs::recursive_directory_iterator(dir_)) {
      if (e.is_regular_file()) {
        out.push_back(fs::relative(e.path(), dir_).string());
      }
    }
    std::sort(out.begin(), out.end());
    return out;
  }

  fs::path dir_;
};

std::string slurp(const fs::path& p) {
  std::string bytes(static_cast<std::size_t>(fs::file_size(p)), '\0');
  std::ifstream in(p, std::ios::binary);
  in.read(bytes.data(), static_cast<std::streamsize>(bytes.size()));
  return bytes;
}

void spill(const fs::path& p, const std::string& bytes) {
  std::ofstream out(p, std::ios::binary | std::ios::trunc);
  out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
}

// Runs a shell command and returns its standard output; fails the test on a non-zero status.
std::string run_command(const std::string& command) {
  std::string out;
  FILE* pipe = ::popen(command.c_str(), "r");
  if (pipe == nullptr) {
    ADD_FAILURE() << "popen failed for: " << command;
    return out;
  }
  char buffer[4096];
  std::size_t n = 0;
  while ((n = std::fread(buffer, 1, sizeof buffer, pipe)) > 0) {
    out.append(buffer, n);
  }
  const int status = ::pclose(pipe);
  EXPECT_EQ(status, 0) << "command failed: " << command;
  return out;
}

bool have_command(const std::string& name) {
  return std::system(("command -v " + name + " > /dev/null 2>&1").c_str()) == 0;
}

// Runs `f`, expects it to throw IoError, and returns the message.
template <typename F>
std::string io_error_of(F&& f) {
  try {
    f();
  } catch (const IoError& e) {
    return e.what();
  }
  ADD_FAILURE() << "no IoError thrown";
  return {};
}

// ---------------------------------------------------------------------------------------------
// Atomic writes

TEST_F(IoTest, UncommittedAtomicFileLeavesNothing) {
  const fs::path target = dir_ / "sub" / "out.txt";
  {
    AtomicFile file(target);
    file.write("partial contents");
    EXPECT_TRUE(fs::exists(file.temporary_path()));
    EXPECT_EQ(file.temporary_path().parent_path(), target.parent_path());
    EXPECT_EQ(file.temporary_path().filename().string().rfind(".out.txt.tmp.", 0), 0U);
    EXPECT_FALSE(fs::exists(target));
  }
  EXPECT_FALSE(fs::exists(target));
  EXPECT_TRUE(entries().empty());
}

TEST_F(IoTest, CommittedAtomicFileHasItsContentsAndNoTemporary) {
  const fs::path target = dir_ / "a" / "b" / "out.bin";
  std::string bytes = "line 1\nline 2\n";
  bytes.push_back('\0');
  bytes += "after a NUL";
  {
    AtomicFile file(target);
    file.write(bytes);
    file.commit();
    EXPECT_THROW(file.write("more"), IoError);
    EXPECT_THROW(file.commit(), IoError);
  }
  EXPECT_EQ(slurp(target), bytes);
  EXPECT_EQ(entries(), std::vector<std::string>{"a/b/out.bin"});
}

TEST_F(IoTest, AtomicFileReplacesOnlyOnCommit) {
  const fs::path target = dir_ / "score.json";
  write_text_atomic(target, "old");
  {
    AtomicFile file(target);
    file.write("new but abandoned");
  }
  EXPECT_EQ(slurp(target), "old");
  write_text_atomic(target, "new");
  EXPECT_EQ(slurp(target), "new");
  EXPECT_EQ(entries(), std::vector<std::string>{"score.json"});
}

TEST_F(IoTest, AtomicFileTemporariesNeverCollide) {
  const fs::path target = dir_ / "same.txt";
  AtomicFile first(target);
  AtomicFile second(target);
  EXPECT_NE(first.temporary_path(), second.temporary_path());
}

TEST_F(IoTest, ReadingAMissingFileNamesIt) {
  const fs::path missing = dir_ / "missing.txt";
  const std::string message = io_error_of([&] { (void)read_file_bytes(missing); });
  EXPECT_NE(message.find(missing.string()), std::string::npos) << message;
}

// ---------------------------------------------------------------------------------------------
// NetCDF

constexpr int kNx = 8;  // intervals: nodes 0..kNx
constexpr int kNy = 6;
constexpr int kLayers = 2;
constexpr std::size_t kRecord = std::size_t{kLayers} * (kNy + 1) * (kNx + 1);

std::vector<double> axis_m(int intervals, double length_m) {
  std::vector<double> v;
  for (int i = 0; i <= intervals; ++i) {
    v.push_back(length_m * i / intervals);
  }
  return v;
}

// A field value that is different at every record, layer and node, and not a short decimal.
double field_value(std::size_t record, std::size_t k) {
  return std::sin(0.37 * static_cast<double>(k) + 1.3 * static_cast<double>(record)) * 1e4 / 3.0;
}

std::vector<double> record_values(std::size_t record) {
  std::vector<double> v(kRecord);
  for (std::size_t k = 0; k < kRecord; ++k) {
    v[k] = field_value(record, k);
  }
  return v;
}

// A small run file: coordinates, psi along time, a time mean and the barotropic streamfunction.
void write_sample(const fs::path& path, std::size_t records) {
  NetcdfWriter w(
      path, FileDescription{"plateau test file", "written by test_io", "plateau io unit test"});
  w.add_time_dimension();
  w.add_layer_coordinate(kLayers);
  w.add_y_coordinate(axis_m(kNy, 3.0e6));
  w.add_x_coordinate(axis_m(kNx, 4.0e6));
  w.define_variable({"psi", {"time", "layer", "y", "x"}, "m2 s-1", "streamfunction", "", true});
  w.define_variable(
      {"psi_mean", {"layer", "y", "x"}, "m2 s-1", "time-mean streamfunction", "", false});
  w.define_variable({"psi_barotropic",
                     {"y", "x"},
                     "m3 s-1",
                     "sum over layers of H_k psi_k",
                     "ocean_barotropic_streamfunction",
                     true});
  w.put_attribute("psi", "closure", "eady");
  w.put_attribute("psi", "snapshot_interval_s", 86400.0);
  w.put_attribute("psi", "layer_count", kLayers);
  w.put_attribute("psi", "steps", std::int64_t{1} << 40);
  const std::vector<double> depths = {1000.0, 3000.0};
  w.put_attribute("psi_mean", "layer_depth_m", depths);
  w.put_global_attribute("case", "double_gyre");
  w.put_global_attribute("dt_s", 1800.0);
  w.put_global_attribute("seed", 7);
  w.put_global_attribute("total_steps", std::int64_t{123456789012});
  for (std::size_t r = 0; r < records; ++r) {
    w.write_time(r, 86400.0 * static_cast<double>(r + 1));
    w.write_record("psi", r, record_values(r));
  }
  w.write("psi_mean", record_values(99));
  std::vector<double> barotropic(std::size_t{kNy + 1} * (kNx + 1));
  for (std::size_t k = 0; k < barotropic.size(); ++k) {
    barotropic[k] = 1e6 * field_value(7, k);
  }
  w.write("psi_barotropic", barotropic);
  w.close();
}

TEST_F(IoTest, NetcdfRoundTripThroughOurReader) {
  const fs::path path = dir_ / "results" / "run-eady.nc";
  write_sample(path, 3);
  EXPECT_EQ(entries(), std::vector<std::string>{"results/run-eady.nc"});

  const NetcdfReader r(path);
  EXPECT_EQ(r.dimension_length("x"), std::size_t{kNx + 1});
  EXPECT_EQ(r.dimension_length("y"), std::size_t{kNy + 1});
  EXPECT_EQ(r.dimension_length("layer"), std::size_t{kLayers});
  EXPECT_EQ(r.dimension_length("time"), 3U);
  EXPECT_FALSE(r.has_dimension("z"));
  EXPECT_TRUE(r.has_variable("psi"));
  EXPECT_FALSE(r.has_variable("q"));

  const NetcdfArray psi = r.read("psi");
  EXPECT_EQ(psi.dimensions, (std::vector<std::string>{"time", "layer", "y", "x"}));
  EXPECT_EQ(psi.shape, (std::vector<std::size_t>{3, kLayers, kNy + 1, kNx + 1}));
  ASSERT_EQ(psi.values.size(), 3 * kRecord);
  for (std::size_t rec = 0; rec < 3; ++rec) {
    for (std::size_t k = 0; k < kRecord; ++k) {
      ASSERT_EQ(std::bit_cast<std::uint64_t>(psi.values[rec * kRecord + k]),
                std::bit_cast<std::uint64_t>(field_value(rec, k)))
          << "record " << rec << " index " << k;
    }
  }
  const NetcdfArray second = r.read_record("psi", 1);
  EXPECT_EQ(second.dimensions, (std::vector<std::string>{"layer", "y", "x"}));
  EXPECT_EQ(second.values, record_values(1));
  EXPECT_THROW((void)r.read_record("psi", 3), IoError);
  EXPECT_EQ(r.read("psi_mean").values, record_values(99));

  EXPECT_EQ(r.read("time").values, (std::vector<double>{86400.0, 172800.0, 259200.0}));
  EXPECT_EQ(r.read("layer").values, (std::vector<double>{1.0, 2.0}));
  EXPECT_EQ(r.read("x").values, axis_m(kNx, 4.0e6));
  EXPECT_EQ(r.read("y").values, axis_m(kNy, 3.0e6));

  EXPECT_EQ(r.string_attribute("psi", "units"), "m2 s-1");
  EXPECT_EQ(r.string_attribute("psi", "long_name"), "streamfunction");
  EXPECT_FALSE(r.has_attribute("psi", "standard_name"));
  EXPECT_EQ(r.string_attribute("psi_barotropic", "standard_name"),
            "ocean_barotropic_streamfunction");
  EXPECT_EQ(r.string_attribute("psi", "closure"), "eady");
  EXPECT_EQ(r.double_attribute("psi", "snapshot_interval_s"), std::vector<double>{86400.0});
  EXPECT_EQ(r.int_attribute("psi", "layer_count"), kLayers);
  EXPECT_EQ(r.int_attribute("psi", "steps"), std::int64_t{1} << 40);
  EXPECT_EQ(r.double_attribute("psi_mean", "layer_depth_m"), (std::vector<double>{1000.0, 3000.0}));
  EXPECT_EQ(r.string_attribute("time", "units"), "seconds since 0001-01-01 00:00:00");
  EXPECT_EQ(r.string_attribute("time", "calendar"), "365_day");
  EXPECT_EQ(r.string_attribute("x", "axis"), "X");
  EXPECT_EQ(r.string_attribute("y", "units"), "m");

  EXPECT_EQ(r.global_string_attribute("Conventions"), "CF-1.8");
  EXPECT_EQ(r.global_string_attribute("title"), "plateau test file");
  EXPECT_EQ(r.global_string_attribute("history"), "written by test_io");
  EXPECT_EQ(r.global_string_attribute("source"), "plateau io unit test");
  EXPECT_EQ(r.global_string_attribute("case"), "double_gyre");
  EXPECT_EQ(r.global_double_attribute("dt_s"), std::vector<double>{1800.0});
  EXPECT_EQ(r.global_int_attribute("seed"), 7);
  EXPECT_EQ(r.global_int_attribute("total_steps"), 123456789012);
  EXPECT_FALSE(r.has_global_attribute("institution"));
}

// netCDF-C is not thread-safe; the io room serializes it, so studies may write from threads.
TEST_F(IoTest, NetcdfWritersInSeveralThreads) {
  std::vector<std::thread> threads;
  for (int t = 0; t < 4; ++t) {
    threads.emplace_back([this, t] {
      for (int n = 0; n < 3; ++n) {
        write_sample(dir_ / ("run-" + std::to_string(t) + "-" + std::to_string(n) + ".nc"), 2);
      }
    });
  }
  for (std::thread& th : threads) {
    th.join();
  }
  EXPECT_EQ(entries().size(), 12U);
  for (const std::string& name : entries()) {
    const NetcdfReader r(dir_ / name);
    EXPECT_EQ(r.read_record("psi", 1).values, record_values(1)) << name;
  }
}

TEST_F(IoTest, NetcdfCheckedByNcdump) {
  ASSERT_TRUE(have_command("ncdump")) << "ncdump not found: install netcdf-bin";
  const fs::path path = dir_ / "run-eady.nc";
  write_sample(path, 2);
  const std::string header = run_command("ncdump -hs '" + path.string() + "'");
  for (const char* expected : {
           "\ttime = UNLIMITED ; // (2 currently)",
           "\tlayer = 2 ;",
           "\ty = 7 ;",
           "\tx = 9 ;",
           "double psi(time, layer, y, x) ;",
           "psi:units = \"m2 s-1\" ;",
           "psi:_DeflateLevel = 1 ;",
           "psi:_Shuffle = \"true\" ;",
           "psi:_ChunkSizes = 1, 2, 7, 9 ;",
           "psi_barotropic:standard_name = \"ocean_barotropic_streamfunction\" ;",
           "time:units = \"seconds since 0001-01-01 00:00:00\" ;",
           "time:calendar = \"365_day\" ;",
           "x:axis = \"X\" ;",
           "y:units = \"m\" ;",
           ":Conventions = \"CF-1.8\" ;",
           ":title = \"plateau test file\" ;",
       }) {
    EXPECT_NE(header.find(expected), std::string::npos) << "missing: " << expected << "\n"
                                                        << header;
  }
  EXPECT_EQ(header.find("psi_mean:_DeflateLevel"), std::string::npos) << header;
  EXPECT_NE(header.find("_Format = \"netCDF-4\""), std::string::npos) << header;
}

TEST_F(IoTest, NetcdfWriterWithoutCloseLeavesNothing) {
  const fs::path path = dir_ / "run-eady.nc";
  {
    NetcdfWriter w(path, FileDescription{"abandoned", "", ""});
    w.add_x_coordinate(axis_m(kNx, 4.0e6));
    EXPECT_EQ(entries().size(), 1U);  // the temporary
  }
  EXPECT_TRUE(entries().empty());

  // An exception mid-write leaves a previous file untouched.
  write_sample(path, 1);
  const std::string before = slurp(path);
  EXPECT_THROW(
      {
        NetcdfWriter w(path, FileDescription{"broken", "", ""});
        w.add_time_dimension();
        w.write_time(0, 1.0);
        w.write("no_such_variable", std::vector<double>{1.0});
      },
      IoError);
  EXPECT_EQ(slurp(path), before);
  EXPECT_EQ(entries(), std::vector<std::string>{"run-eady.nc"});
}

TEST_F(IoTest, NetcdfErrorsNameTheFileAndTheVariable) {
  const fs::path path = dir_ / "run-eady.nc";
  NetcdfWriter w(path, FileDescription{"errors", "", ""});
  w.add_time_dimension();
  w.add_x_coordinate(axis_m(kNx, 4.0e6));
  w.define_variable({"u", {"time", "x"}, "m s-1", "eastward velocity", "", true});

  std::string m = io_error_of([&] { w.write("nope", std::vector<double>{1.0}); });
  EXPECT_NE(m.find(path.string()), std::string::npos) << m;
  EXPECT_NE(m.find("'nope'"), std::string::npos) << m;
  EXPECT_NE(m.find(nc_strerror(NC_ENOTVAR)), std::string::npos) << m;

  m = io_error_of([&] { w.write_record("u", 0, std::vector<double>(3, 0.0)); });
  EXPECT_NE(m.find("'u'"), std::string::npos) << m;
  EXPECT_NE(m.find("9 values, 3 given"), std::string::npos) << m;

  m = io_error_of([&] { w.define_variable({"v", {"x", "nodim"}, "m s-1", "v", "", true}); });
  EXPECT_NE(m.find("'v'"), std::string::npos) << m;
  EXPECT_NE(m.find("nodim"), std::string::npos) << m;

  m = io_error_of([&] { w.define_variable({"u", {"x"}, "m s-1", "again", "", true}); });
  EXPECT_NE(m.find("'u'"), std::string::npos) << m;

  m = io_error_of([&] { w.define_variable({"w", {"x", "time"}, "m s-1", "w", "", true}); });
  EXPECT_NE(m.find("time must be its first dimension"), std::string::npos) << m;

  w.close();
  m = io_error_of([&] { w.write_time(1, 2.0); });
  EXPECT_NE(m.find("after close"), std::string::npos) << m;

  const NetcdfReader r(path);
  m = io_error_of([&] { (void)r.read("nope"); });
  EXPECT_NE(m.find(path.string()), std::string::npos) << m;
  EXPECT_NE(m.find("'nope'"), std::string::npos) << m;
  m = io_error_of([&] { (void)r.string_attribute("u", "missing_attribute"); });
  EXPECT_NE(m.find("missing_attribute"), std::string::npos) << m;
  m = io_error_of([&] { (void)r.double_attribute("u", "units"); });
  EXPECT_NE(m.find("it is text"), std::string::npos) << m;

  m = io_error_of([&] { NetcdfReader missing(dir_ / "missing.nc"); });
  EXPECT_NE(m.find("missing.nc"), std::string::npos) << m;
}

// ---------------------------------------------------------------------------------------------
// Checkpoints

const std::vector<double>& awkward_doubles() {
  static const std::vector<double> v = {
      0.1 + 0.2,  // 0.30000000000000004: survives only as raw bits
      std::numeric_limits<double>::denorm_min(),
      -std::numeric_limits<double>::denorm_min(),
      4.9406564584124654e-320,  // a denormal with several bits set
      std::numeric_limits<double>::min() / 3.0,
      -0.0,
      0.0,
      std::numeric_limits<double>::min(),
      std::numeric_limits<double>::max(),
      std::numeric_limits<double>::lowest(),
      std::numeric_limits<double>::epsilon(),
      std::numbers::pi,
      1.0 / 3.0,
      -2.5e-300,
      std::numeric_limits<double>::infinity(),
  };
  return v;
}

void expect_same_bits(const std::vector<double>& a, const std::vector<double>& b) {
  ASSERT_EQ(a.size(), b.size());
  for (std::size_t i = 0; i < a.size(); ++i) {
    EXPECT_EQ(std::bit_cast<std::uint64_t>(a[i]), std::bit_cast<std::uint64_t>(b[i]))
        << "index " << i;
  }
}

fs::path write_sample_checkpoint(const fs::path& path) {
  CheckpointWriter w("case=double_gyre;closure=eady;key=0123456789abcdef");
  w.add("psi", awkward_doubles());
  w.add("empty", std::vector<double>{});
  w.add("step", std::int64_t{1234567});
  const std::vector<std::int64_t> counters = {std::numeric_limits<std::int64_t>::min(), -1, 0,
                                              std::numeric_limits<std::int64_t>::max()};
  w.add("counters", counters);
  w.add("closure", "eady");
  w.add("binary text", std::string("a\0b\xff", 4));
  w.commit(path);
  return path;
}

constexpr const char* kSampleKey = "case=double_gyre;closure=eady;key=0123456789abcdef";

TEST_F(IoTest, CheckpointRoundTripIsBitExact) {
  const fs::path path = write_sample_checkpoint(dir_ / "checkpoints" / "step-1234567.ckpt");
  EXPECT_EQ(entries(), std::vector<std::string>{"checkpoints/step-1234567.ckpt"});

  const CheckpointReader r(path, kSampleKey);
  EXPECT_EQ(r.key(), kSampleKey);
  EXPECT_EQ(r.names(), (std::vector<std::string>{"psi", "empty", "step", "counters", "closure",
                                                 "binary text"}));
  expect_same_bits(r.get_doubles("psi"), awkward_doubles());
  EXPECT_EQ(r.get_doubles("psi")[0], 0.1 + 0.2);
  EXPECT_TRUE(r.get_doubles("empty").empty());
  EXPECT_EQ(r.get_int("step"), 1234567);
  EXPECT_EQ(r.get_ints("counters"),
            (std::vector<std::int64_t>{std::numeric_limits<std::int64_t>::min(), -1, 0,
                                       std::numeric_limits<std::int64_t>::max()}));
  EXPECT_EQ(r.get_string("closure"), "eady");
  EXPECT_EQ(r.get_string("binary text"), std::string("a\0b\xff", 4));
  EXPECT_TRUE(r.has("step"));
  EXPECT_FALSE(r.has("q"));

  // The format is fixed: the same content gives the same bytes.
  const fs::path again = write_sample_checkpoint(dir_ / "again.ckpt");
  EXPECT_EQ(slurp(path), slurp(again));
  EXPECT_EQ(slurp(path).substr(0, 8), "PLTCKPT1");
}

TEST_F(IoTest, CheckpointErrorsNameTheFileAndTheBlob) {
  const fs::path path = write_sample_checkpoint(dir_ / "c.ckpt");
  const CheckpointReader r(path, kSampleKey);
  std::string m = io_error_of([&] { (void)r.get_doubles("q"); });
  EXPECT_NE(m.find(path.string()), std::string::npos) << m;
  EXPECT_NE(m.find("'q'"), std::string::npos) << m;
  m = io_error_of([&] { (void)r.get_int("psi"); });
  EXPECT_NE(m.find("'psi' holds doubles"), std::string::npos) << m;
  m = io_error_of([&] { (void)r.get_int("counters"); });
  EXPECT_NE(m.find("4 int64 values, not one"), std::string::npos) << m;
  m = io_error_of([&] { (void)r.get_string("step"); });
  EXPECT_NE(m.find("'step'"), std::string::npos) << m;

  CheckpointWriter w("k");
  w.add("a", std::int64_t{1});
  m = io_error_of([&] { w.add("a", "again"); });
  EXPECT_NE(m.find("'a' added twice"), std::string::npos) << m;

  m = io_error_of([&] { CheckpointReader missing(dir_ / "missing.ckpt", "k"); });
  EXPECT_NE(m.find("missing.ckpt"), std::string::npos) << m;
}

TEST_F(IoTest, CheckpointWithAnotherKeyIsRejected) {
  const fs::path path = write_sample_checkpoint(dir_ / "c.ckpt");
  const std::string m = io_error_of([&] { CheckpointReader r(path, "case=single_gyre"); });
  EXPECT_NE(m.find(path.string()), std::string::npos) << m;
  EXPECT_NE(m.find("belongs to another run"), std::string::npos) << m;
  EXPECT_NE(m.find("case=single_gyre"), std::string::npos) << m;
}

TEST_F(IoTest, TruncatedCheckpointIsRejected) {
  const fs::path path = write_sample_checkpoint(dir_ / "c.ckpt");
  const std::string whole = slurp(path);
  for (const std::size_t keep :
       {whole.size() - 1, whole.size() - 8, whole.size() / 2, std::size_t{20}}) {
    const fs::path cut = dir_ / ("cut-" + std::to_string(keep) + ".ckpt");
    spill(cut, whole.substr(0, keep));
    const std::string m = io_error_of([&] { CheckpointReader r(cut, kSampleKey); });
    EXPECT_NE(m.find(cut.string()), std::string::npos) << m;
    EXPECT_NE(m.find("truncated"), std::string::npos) << keep << ": " << m;
  }
  for (const std::size_t keep : {std::size_t{0}, std::size_t{5}, std::size_t{19}}) {
    const fs::path cut = dir_ / ("short-" + std::to_string(keep) + ".ckpt");
    spill(cut, whole.substr(0, keep));
    const std::string m = io_error_of([&] { CheckpointReader r(cut, kSampleKey); });
    EXPECT_NE(m.find("not a plateau checkpoint"), std::string::npos) << keep << ": " << m;
  }
  // Bytes appended after the checksum are as wrong as bytes missing.
  const fs::path longer = dir_ / "longer.ckpt";
  spill(longer, whole + "x");
  const std::string m = io_error_of([&] { CheckpointReader r(longer, kSampleKey); });
  EXPECT_NE(m.find("corrupted"), std::string::npos) << m;
}

TEST_F(IoTest, CheckpointWithAnyFlippedByteIsRejected) {
  const fs::path path = write_sample_checkpoint(dir_ / "c.ckpt");
  const std::string whole = slurp(path);
  const fs::path bad = dir_ / "flipped.ckpt";
  for (std::size_t at = 0; at < whole.size(); ++at) {
    std::string bytes = whole;
    bytes[at] = static_cast<char>(bytes[at] ^ 0x10);
    spill(bad, bytes);
    EXPECT_THROW(CheckpointReader(bad, kSampleKey), IoError) << "byte " << at;
  }
  // A flip in a payload is reported as corruption.
  std::string bytes = whole;
  bytes[whole.size() / 2] = static_cast<char>(bytes[whole.size() / 2] ^ 0x01);
  spill(bad, bytes);
  const std::string m = io_error_of([&] { CheckpointReader r(bad, kSampleKey); });
  EXPECT_NE(m.find("corrupted: checksum mismatch"), std::string::npos) << m;
  EXPECT_NE(m.find(bad.string()), std::string::npos) << m;
}

// ---------------------------------------------------------------------------------------------
// Hashes

TEST(Sha256, FipsVectors) {
  // FIPS 180-2, Appendix B.1: the one-block message "abc".
  EXPECT_EQ(sha256_hex("abc"), "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  // FIPS 180-2, Appendix B.2: the 448-bit two-block message.
  EXPECT_EQ(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq"),
            "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  // FIPS 180-2, Appendix B.3: one million repetitions of "a".
  EXPECT_EQ(sha256_hex(std::string(1000000, 'a')),
            "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
  // The empty message is not in FIPS 180-2; its digest is the Len = 0 entry of NIST CAVP's
  // SHA256ShortMsg.rsp.
  EXPECT_EQ(sha256_hex(""), "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
}

TEST(Sha256, PiecesGiveTheSameDigestAsTheWhole) {
  std::string text;
  for (int i = 0; i < 300; ++i) {
    text.push_back(static_cast<char>('a' + (i * 7) % 26));
  }
  const std::string whole = sha256_hex(text);
  for (const std::size_t cut : {0U, 1U, 55U, 56U, 63U, 64U, 65U, 128U, 299U, 300U}) {
    Sha256 h;
    h.update(std::string_view(text).substr(0, cut));
    h.update(std::string_view(text).substr(cut));
    EXPECT_EQ(to_hex(h.digest()), whole) << "cut at " << cut;
  }
  Sha256 spent;
  (void)spent.digest();
  EXPECT_THROW(spent.update("x"), std::logic_error);
}

class Sha256Files : public IoTest {};

// Padding boundaries (55, 56, 64 bytes mod 64) against coreutils' sha256sum.
TEST_F(Sha256Files, PaddingBoundariesAgreeWithSha256sum) {
  if (!have_command("sha256sum")) {
    GTEST_SKIP() << "sha256sum not found";
  }
  for (const std::size_t n :
       {1U, 55U, 56U, 57U, 63U, 64U, 65U, 119U, 120U, 127U, 128U, 129U, 1000U}) {
    std::string text;
    for (std::size_t i = 0; i < n; ++i) {
      text.push_back(static_cast<char>((i * 131 + 7) % 256));
    }
    const fs::path file = dir_ / ("m" + std::to_string(n));
    spill(file, text);
    const std::string reference = run_command("sha256sum '" + file.string() + "'").substr(0, 64);
    EXPECT_EQ(sha256_hex(text), reference) << n << " bytes";
    EXPECT_EQ(sha256_file_hex(file), reference) << n << " bytes";
  }
}

TEST(Fnv1a64, ReferenceVectors) {
  // Check values from the FNV reference test suite (FNV-1a, 64 bit).
  const auto fnv = [](std::string_view s) {
    return fnv1a64(std::as_bytes(std::span<const char>(s.data(), s.size())));
  };
  EXPECT_EQ(fnv(""), 0xcbf29ce484222325ULL);
  EXPECT_EQ(fnv("a"), 0xaf63dc4c8601ec8cULL);
  EXPECT_EQ(fnv("foobar"), 0x85944171f73967e8ULL);
  const std::uint64_t first = fnv("foo");
  EXPECT_EQ(fnv1a64(std::as_bytes(std::span<const char>("bar", 3)), first), fnv("foobar"));
}

}  // namespace
