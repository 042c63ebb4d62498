#include "harness/io/netcdf.hpp"

#include <netcdf.h>

#include <algorithm>
#include <mutex>
#include <numeric>
#include <utility>

#include "harness/io/atomic_file.hpp"
#include "harness/io/error.hpp"

namespace plateau::io {
namespace {

// netCDF-C keeps global state and is not thread-safe; recursive because public calls nest.
std::recursive_mutex& netcdf_mutex() {
  static std::recursive_mutex m;
  return m;
}
using Lock = std::lock_guard<std::recursive_mutex>;

// A compressed chunk stays under this size: one record of a coarse or truth field fits whole.
constexpr std::size_t kMaxChunkBytes = std::size_t{16} << 20;
constexpr int kDeflateLevel = 1;

std::string describe(const std::filesystem::path& file, std::string_view variable) {
  std::string where = "netCDF file '" + file.string() + "'";
  if (!variable.empty()) {
    where += ", variable '" + std::string(variable) + "'";
  }
  return where;
}

[[noreturn]] void fail(const std::filesystem::path& file, std::string_view variable,
                       std::string_view action, std::string_view reason) {
  throw IoError(file, describe(file, variable) + ": cannot " + std::string(action) + ": " +
                          std::string(reason));
}

void check(int status, const std::filesystem::path& file, std::string_view variable,
           std::string_view action) {
  if (status != NC_NOERR) {
    fail(file, variable, action, nc_strerror(status));
  }
}

std::size_t product(std::span<const std::size_t> n) {
  return std::accumulate(n.begin(), n.end(), std::size_t{1},
                         [](std::size_t a, std::size_t b) { return a * b; });
}

// Chunks of one record along the unlimited dimension and the full extent elsewhere, halved
// along the outermost dimensions until under kMaxChunkBytes.
std::vector<std::size_t> chunk_sizes(std::vector<std::size_t> lengths, bool first_unlimited) {
  if (first_unlimited && !lengths.empty()) {
    lengths[0] = 1;
  }
  for (std::size_t& n : lengths) {
    n = std::max<std::size_t>(n, 1);
  }
  for (std::size_t d = 0;
       d < lengths.size() && product(lengths) * sizeof(double) > kMaxChunkBytes;) {
    if (lengths[d] == 1) {
      ++d;
    } else {
      lengths[d] = (lengths[d] + 1) / 2;
    }
  }
  return lengths;
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// Writer

struct NetcdfWriter::State {
  explicit State(std::filesystem::path final_path) : name(std::move(final_path)) {}

  TemporaryPath name;
  int ncid = -1;
  bool open = false;
  int time_dimid = -1;

  const std::filesystem::path& file() const { return name.final_path(); }

  int id() const {
    if (!open) {
      throw IoError(file(), describe(file(), {}) + ": used after close()");
    }
    return ncid;
  }

  int varid(std::string_view variable) const {
    int v = -1;
    check(nc_inq_varid(id(), std::string(variable).c_str(), &v), file(), variable,
          "find the variable");
    return v;
  }

  struct Shape {
    std::vector<std::size_t> lengths;
    bool along_time = false;
  };

  Shape shape(std::string_view variable, int var) const {
    int ndims = 0;
    check(nc_inq_varndims(ncid, var, &ndims), file(), variable, "query its dimensions");
    std::vector<int> dimids(static_cast<std::size_t>(ndims));
    check(nc_inq_vardimid(ncid, var, dimids.data()), file(), variable, "query its dimensions");
    Shape s;
    for (const int d : dimids) {
      std::size_t len = 0;
      check(nc_inq_dimlen(ncid, d, &len), file(), variable, "query a dimension length");
      s.lengths.push_back(len);
    }
    s.along_time = !dimids.empty() && dimids[0] == time_dimid;
    return s;
  }

  void put_text(int var, std::string_view variable, std::string_view attribute,
                std::string_view v) {
    check(nc_put_att_text(id(), var, std::string(attribute).c_str(), v.size(), v.data()), file(),
          variable, "write attribute '" + std::string(attribute) + "'");
  }
  void put_doubles(int var, std::string_view variable, std::string_view attribute,
                   std::span<const double> v) {
    check(
        nc_put_att_double(id(), var, std::string(attribute).c_str(), NC_DOUBLE, v.size(), v.data()),
        file(), variable, "write attribute '" + std::string(attribute) + "'");
  }
  void put_int(int var, std::string_view variable, std::string_view attribute, int v) {
    check(nc_put_att_int(id(), var, std::string(attribute).c_str(), NC_INT, 1, &v), file(),
          variable, "write attribute '" + std::string(attribute) + "'");
  }
  void put_int64(int var, std::string_view variable, std::string_view attribute, std::int64_t v) {
    const long long ll = v;
    check(nc_put_att_longlong(id(), var, std::string(attribute).c_str(), NC_INT64, 1, &ll), file(),
          variable, "write attribute '" + std::string(attribute) + "'");
  }

  int define_dimension(std::string_view dim, std::size_t length) {
    int d = -1;
    check(nc_def_dim(id(), std::string(dim).c_str(), length, &d), file(), {},
          "define dimension '" + std::string(dim) + "'");
    return d;
  }
};

NetcdfWriter::NetcdfWriter(std::filesystem::path final_path, const FileDescription& description)
    : state_(std::make_unique<State>(std::move(final_path))) {
  const Lock lock(netcdf_mutex());
  State& s = *state_;
  check(nc_create(s.name.temporary().c_str(), NC_NETCDF4 | NC_CLOBBER, &s.ncid), s.file(), {},
        "create it (as '" + s.name.temporary().string() + "')");
  s.open = true;
  s.put_text(NC_GLOBAL, {}, "Conventions", kCfConventions);
  const std::pair<const char*, const std::string*> globals[] = {{"title", &description.title},
                                                                {"history", &description.history},
                                                                {"source", &description.source}};
  for (const auto& [name, value] : globals) {
    if (!value->empty()) {
      s.put_text(NC_GLOBAL, {}, name, *value);
    }
  }
}

NetcdfWriter::~NetcdfWriter() {
  const Lock lock(netcdf_mutex());
  if (state_ && state_->open) {
    nc_close(state_->ncid);  // the temporary is removed by state_->name
  }
}

const std::filesystem::path& NetcdfWriter::final_path() const noexcept {
  return state_->name.final_path();
}

void NetcdfWriter::add_dimension(std::string_view name, std::size_t length) {
  const Lock lock(netcdf_mutex());
  state_->define_dimension(name, length);
}

void NetcdfWriter::add_time_dimension() {
  const Lock lock(netcdf_mutex());
  State& s = *state_;
  if (s.time_dimid >= 0) {
    throw IoError(s.file(), describe(s.file(), kTimeDimension) + ": defined twice");
  }
  const int d = s.define_dimension(kTimeDimension, NC_UNLIMITED);
  int var = -1;
  check(nc_def_var(s.ncid, std::string(kTimeDimension).c_str(), NC_DOUBLE, 1, &d, &var), s.file(),
        kTimeDimension, "define the variable");
  s.time_dimid = d;
  s.put_text(var, kTimeDimension, "units", kTimeUnits);
  s.put_text(var, kTimeDimension, "calendar", kTimeCalendar);
  s.put_text(var, kTimeDimension, "standard_name", "time");
  s.put_text(var, kTimeDimension, "long_name", "model time since the start of the run");
  s.put_text(var, kTimeDimension, "axis", "T");
}

namespace {

void add_axis(NetcdfWriter& w, std::string_view name, std::string_view axis,
              std::string_view long_name, std::span<const double> values_m) {
  w.add_dimension(name, values_m.size());
  w.define_variable(
      VariableSpec{std::string(name), {std::string(name)}, "m", std::string(long_name), "", false});
  w.put_attribute(name, "axis", axis);
  w.write(name, values_m);
}

}  // namespace

void NetcdfWriter::add_x_coordinate(std::span<const double> x_m) {
  const Lock lock(netcdf_mutex());
  add_axis(*this, "x", "X", "eastward distance from the western wall", x_m);
}

void NetcdfWriter::add_y_coordinate(std::span<const double> y_m) {
  const Lock lock(netcdf_mutex());
  add_axis(*this, "y", "Y", "northward distance from the southern wall", y_m);
}

void NetcdfWriter::add_layer_coordinate(int layer_count) {
  const Lock lock(netcdf_mutex());
  State& s = *state_;
  if (layer_count < 1) {
    throw IoError(s.file(), describe(s.file(), "layer") + ": cannot define " +
                                std::to_string(layer_count) + " layers");
  }
  const int d = s.define_dimension("layer", static_cast<std::size_t>(layer_count));
  int var = -1;
  check(nc_def_var(s.ncid, "layer", NC_INT, 1, &d, &var), s.file(), "layer", "define the variable");
  s.put_text(var, "layer", "long_name", "layer number, 1 at the top");
  std::vector<int> numbers(static_cast<std::size_t>(layer_count));
  std::iota(numbers.begin(), numbers.end(), 1);
  check(nc_put_var_int(s.ncid, var, numbers.data()), s.file(), "layer", "write the values");
}

void NetcdfWriter::define_variable(const VariableSpec& spec) {
  const Lock lock(netcdf_mutex());
  State& s = *state_;
  const int ncid = s.id();
  std::vector<int> dimids;
  std::vector<std::size_t> lengths;
  for (const std::string& dim : spec.dimensions) {
    int d = -1;
    check(nc_inq_dimid(ncid, dim.c_str(), &d), s.file(), spec.name,
          "find its dimension '" + dim + "'");
    std::size_t len = 0;
    check(nc_inq_dimlen(ncid, d, &len), s.file(), spec.name, "query its dimension '" + dim + "'");
    if (d == s.time_dimid && !dimids.empty()) {
      fail(s.file(), spec.name, "define the variable", "time must be its first dimension");
    }
    dimids.push_back(d);
    lengths.push_back(len);
  }
  int var = -1;
  check(nc_def_var(ncid, spec.name.c_str(), NC_DOUBLE, static_cast<int>(dimids.size()),
                   dimids.data(), &var),
        s.file(), spec.name, "define the variable");
  const bool along_time = !dimids.empty() && dimids[0] == s.time_dimid;
  if (!dimids.empty() && (spec.compress || along_time)) {
    const std::vector<std::size_t> chunks = chunk_sizes(lengths, along_time);
    check(nc_def_var_chunking(ncid, var, NC_CHUNKED, chunks.data()), s.file(), spec.name,
          "set its chunking");
  }
  if (!dimids.empty() && spec.compress) {
    check(nc_def_var_deflate(ncid, var, 1, 1, kDeflateLevel), s.file(), spec.name,
          "set its compression");
  }
  s.put_text(var, spec.name, "units", spec.units);
  s.put_text(var, spec.name, "long_name", spec.long_name);
  if (!spec.standard_name.empty()) {
    s.put_text(var, spec.name, "standard_name", spec.standard_name);
  }
}

void NetcdfWriter::put_attribute(std::string_view variable, std::string_view name,
                                 std::string_view value) {
  const Lock lock(netcdf_mutex());
  state_->put_text(state_->varid(variable), variable, name, value);
}

void NetcdfWriter::put_attribute(std::string_view variable, std::string_view name, double value) {
  const Lock lock(netcdf_mutex());
  state_->put_doubles(state_->varid(variable), variable, name, std::span<const double>(&value, 1));
}

void NetcdfWriter::put_attribute(std::string_view variable, std::string_view name,
                                 std::span<const double> values) {
  const Lock lock(netcdf_mutex());
  state_->put_doubles(state_->varid(variable), variable, name, values);
}

void NetcdfWriter::put_attribute(std::string_view variable, std::string_view name, int value) {
  const Lock lock(netcdf_mutex());
  state_->put_int(state_->varid(variable), variable, name, value);
}

void NetcdfWriter::put_attribute(std::string_view variable, std::string_view name,
                                 std::int64_t value) {
  const Lock lock(netcdf_mutex());
  state_->put_int64(state_->varid(variable), variable, name, value);
}

void NetcdfWriter::put_global_attribute(std::string_view name, std::string_view value) {
  const Lock lock(netcdf_mutex());
  state_->put_text(NC_GLOBAL, {}, name, value);
}

void NetcdfWriter::put_global_attribute(std::string_view name, double value) {
  const Lock lock(netcdf_mutex());
  state_->put_doubles(NC_GLOBAL, {}, name, std::span<const double>(&value, 1));
}

void NetcdfWriter::put_global_attribute(std::string_view name, int value) {
  const Lock lock(netcdf_mutex());
  state_->put_int(NC_GLOBAL, {}, name, value);
}

void NetcdfWriter::put_global_attribute(std::string_view name, std::int64_t value) {
  const Lock lock(netcdf_mutex());
  state_->put_int64(NC_GLOBAL, {}, name, value);
}

void NetcdfWriter::write(std::string_view variable, std::span<const double> values) {
  const Lock lock(netcdf_mutex());
  const State& s = *state_;
  const int var = s.varid(variable);
  State::Shape shape = s.shape(variable, var);
  if (shape.along_time) {
    const std::size_t per_record = product(std::span<const std::size_t>(shape.lengths).subspan(1));
    if (per_record == 0 ? !values.empty() : values.size() % per_record != 0) {
      fail(s.file(), variable, "write the variable",
           std::to_string(values.size()) + " values are not whole records of " +
               std::to_string(per_record));
    }
    shape.lengths[0] = per_record == 0 ? 0 : values.size() / per_record;
  } else if (product(shape.lengths) != values.size()) {
    fail(s.file(), variable, "write the variable",
         "it holds " + std::to_string(product(shape.lengths)) + " values, " +
             std::to_string(values.size()) + " given");
  }
  if (values.empty()) {
    return;
  }
  const std::vector<std::size_t> start(shape.lengths.size(), 0);
  check(nc_put_vara_double(s.ncid, var, start.data(), shape.lengths.data(), values.data()),
        s.file(), variable, "write the values");
}

void NetcdfWriter::write_record(std::string_view variable, std::size_t record,
                                std::span<const double> values) {
  const Lock lock(netcdf_mutex());
  const State& s = *state_;
  const int var = s.varid(variable);
  State::Shape shape = s.shape(variable, var);
  if (!shape.along_time) {
    fail(s.file(), variable, "write record " + std::to_string(record),
         "its first dimension is not time");
  }
  shape.lengths[0] = 1;
  if (product(shape.lengths) != values.size()) {
    fail(s.file(), variable, "write record " + std::to_string(record),
         "a record holds " + std::to_string(product(shape.lengths)) + " values, " +
             std::to_string(values.size()) + " given");
  }
  std::vector<std::size_t> start(shape.lengths.size(), 0);
  start[0] = record;
  check(nc_put_vara_double(s.ncid, var, start.data(), shape.lengths.data(), values.data()),
        s.file(), variable, "write record " + std::to_string(record));
}

void NetcdfWriter::write_time(std::size_t record, double seconds) {
  write_record(kTimeDimension, record, std::span<const double>(&seconds, 1));
}

void NetcdfWriter::close() {
  const Lock lock(netcdf_mutex());
  State& s = *state_;
  const int ncid = s.id();
  s.open = false;
  check(nc_close(ncid), s.file(), {}, "close it");
  s.name.publish();
}

// ---------------------------------------------------------------------------------------------
// Reader

NetcdfReader::NetcdfReader(std::filesystem::path path) : path_(std::move(path)) {
  const Lock lock(netcdf_mutex());
  check(nc_open(path_.c_str(), NC_NOWRITE, &ncid_), path_, {}, "open it");
}

NetcdfReader::~NetcdfReader() {
  const Lock lock(netcdf_mutex());
  nc_close(ncid_);
}

bool NetcdfReader::has_dimension(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  int d = -1;
  return nc_inq_dimid(ncid_, std::string(name).c_str(), &d) == NC_NOERR;
}

std::size_t NetcdfReader::dimension_length(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  int d = -1;
  check(nc_inq_dimid(ncid_, std::string(name).c_str(), &d), path_, {},
        "find dimension '" + std::string(name) + "'");
  std::size_t len = 0;
  check(nc_inq_dimlen(ncid_, d, &len), path_, {}, "query dimension '" + std::string(name) + "'");
  return len;
}

bool NetcdfReader::has_variable(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  int v = -1;
  return nc_inq_varid(ncid_, std::string(name).c_str(), &v) == NC_NOERR;
}

std::vector<std::string> NetcdfReader::variable_names() const {
  const Lock lock(netcdf_mutex());
  int nvars = 0;
  check(nc_inq_nvars(ncid_, &nvars), path_, {}, "count its variables");
  std::vector<std::string> names;
  for (int v = 0; v < nvars; ++v) {
    char name[NC_MAX_NAME + 1] = {};
    check(nc_inq_varname(ncid_, v, name), path_, {}, "query a variable name");
    names.emplace_back(name);
  }
  return names;
}

int NetcdfReader::varid(std::string_view variable) const {
  int v = -1;
  check(nc_inq_varid(ncid_, std::string(variable).c_str(), &v), path_, variable,
        "find the variable");
  return v;
}

NetcdfArray NetcdfReader::read_slab(std::string_view variable, bool one_record,
                                    std::size_t record) const {
  const int var = varid(variable);
  int ndims = 0;
  check(nc_inq_varndims(ncid_, var, &ndims), path_, variable, "query its dimensions");
  std::vector<int> dimids(static_cast<std::size_t>(ndims));
  check(nc_inq_vardimid(ncid_, var, dimids.data()), path_, variable, "query its dimensions");
  NetcdfArray out;
  for (const int d : dimids) {
    char name[NC_MAX_NAME + 1] = {};
    std::size_t len = 0;
    check(nc_inq_dim(ncid_, d, name, &len), path_, variable, "query a dimension");
    out.dimensions.emplace_back(name);
    out.shape.push_back(len);
  }
  std::vector<std::size_t> start(out.shape.size(), 0);
  std::vector<std::size_t> count = out.shape;
  if (one_record) {
    if (out.shape.empty() || record >= out.shape[0]) {
      fail(path_, variable, "read record " + std::to_string(record),
           out.shape.empty() ? std::string("it has no dimensions")
                             : "it has " + std::to_string(out.shape[0]) + " records");
    }
    start[0] = record;
    count[0] = 1;
    out.dimensions.erase(out.dimensions.begin());
    out.shape.erase(out.shape.begin());
  }
  out.values.resize(product(count));
  if (!out.values.empty()) {
    check(nc_get_vara_double(ncid_, var, start.data(), count.data(), out.values.data()), path_,
          variable,
          one_record ? "read record " + std::to_string(record) : std::string("read the values"));
  }
  return out;
}

NetcdfArray NetcdfReader::read(std::string_view variable) const {
  const Lock lock(netcdf_mutex());
  return read_slab(variable, false, 0);
}

NetcdfArray NetcdfReader::read_record(std::string_view variable, std::size_t record) const {
  const Lock lock(netcdf_mutex());
  return read_slab(variable, true, record);
}

std::string NetcdfReader::text_attribute(int var, std::string_view variable,
                                         std::string_view name) const {
  const std::string att(name);
  const std::string action = "read attribute '" + att + "'";
  nc_type type = NC_NAT;
  std::size_t len = 0;
  check(nc_inq_att(ncid_, var, att.c_str(), &type, &len), path_, variable, action);
  if (type == NC_CHAR) {
    std::string text(len, '\0');
    check(nc_get_att_text(ncid_, var, att.c_str(), text.data()), path_, variable, action);
    while (!text.empty() && text.back() == '\0') {
      text.pop_back();
    }
    return text;
  }
  if (type == NC_STRING && len == 1) {
    char* value = nullptr;
    check(nc_get_att_string(ncid_, var, att.c_str(), &value), path_, variable, action);
    std::string text = value != nullptr ? value : "";
    nc_free_string(1, &value);
    return text;
  }
  fail(path_, variable, action, "it is not text");
}

std::vector<double> NetcdfReader::numeric_attribute(int var, std::string_view variable,
                                                    std::string_view name) const {
  const std::string att(name);
  const std::string action = "read attribute '" + att + "'";
  nc_type type = NC_NAT;
  std::size_t len = 0;
  check(nc_inq_att(ncid_, var, att.c_str(), &type, &len), path_, variable, action);
  if (type == NC_CHAR || type == NC_STRING) {
    fail(path_, variable, action, "it is text, not a number");
  }
  std::vector<double> values(len);
  if (len == 0) {
    return values;
  }
  check(nc_get_att_double(ncid_, var, att.c_str(), values.data()), path_, variable, action);
  return values;
}

std::int64_t NetcdfReader::integer_attribute(int var, std::string_view variable,
                                             std::string_view name) const {
  const std::string att(name);
  const std::string action = "read attribute '" + att + "'";
  nc_type type = NC_NAT;
  std::size_t len = 0;
  check(nc_inq_att(ncid_, var, att.c_str(), &type, &len), path_, variable, action);
  const bool integral = type == NC_BYTE || type == NC_SHORT || type == NC_INT || type == NC_INT64 ||
                        type == NC_UBYTE || type == NC_USHORT || type == NC_UINT ||
                        type == NC_UINT64;
  if (!integral || len != 1) {
    fail(path_, variable, action, "it is not one integer");
  }
  long long value = 0;
  check(nc_get_att_longlong(ncid_, var, att.c_str(), &value), path_, variable, action);
  return value;
}

bool NetcdfReader::has_attribute(std::string_view variable, std::string_view name) const {
  const Lock lock(netcdf_mutex());
  int att = -1;
  return nc_inq_attid(ncid_, varid(variable), std::string(name).c_str(), &att) == NC_NOERR;
}

std::string NetcdfReader::string_attribute(std::string_view variable, std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return text_attribute(varid(variable), variable, name);
}

std::vector<double> NetcdfReader::double_attribute(std::string_view variable,
                                                   std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return numeric_attribute(varid(variable), variable, name);
}

std::int64_t NetcdfReader::int_attribute(std::string_view variable, std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return integer_attribute(varid(variable), variable, name);
}

bool NetcdfReader::has_global_attribute(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  int att = -1;
  return nc_inq_attid(ncid_, NC_GLOBAL, std::string(name).c_str(), &att) == NC_NOERR;
}

std::string NetcdfReader::global_string_attribute(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return text_attribute(NC_GLOBAL, {}, name);
}

std::vector<double> NetcdfReader::global_double_attribute(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return numeric_attribute(NC_GLOBAL, {}, name);
}

std::int64_t NetcdfReader::global_int_attribute(std::string_view name) const {
  const Lock lock(netcdf_mutex());
  return integer_attribute(NC_GLOBAL, {}, name);
}

}  // namespace plateau::io
