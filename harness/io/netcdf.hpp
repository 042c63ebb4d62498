#pragma once
// NetCDF-4 output following the CF conventions (CF-1.8), and a small reader.
//
// NetcdfWriter creates the file under a temporary name beside the final one (TemporaryPath)
// and renames it onto the final name in close(); a writer destroyed without close() (an
// exception mid-run) leaves no file and no temporary, and any previous file at the final name
// stays as it was. Every failure throws IoError naming the file, the variable where there is
// one, and netCDF's own reason (nc_strerror).
//
// Data layout: values are in C order, the last dimension fastest. For a variable with
// dimensions (time, layer, y, x) one record holds layer-major blocks of (ny + 1) (nx + 1)
// values with x fastest, so each layer's Field (x fastest) can be passed as it is stored.
//
// Coordinates, CF style: x and y in m with axis X and Y (the basin's grid nodes), layer
// numbered 1..N from the top, and time in seconds since the start of the run, written as
// "seconds since 0001-01-01 00:00:00" on the 365_day calendar (the model has no dates).
//
// netCDF-C and the HDF5 beneath it are not thread-safe: every call of this file holds one
// process-wide mutex, so writers and readers in several threads (tune, compare) are safe but
// take turns.

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace plateau::io {

inline constexpr std::string_view kCfConventions = "CF-1.8";
inline constexpr std::string_view kTimeDimension = "time";
inline constexpr std::string_view kTimeUnits = "seconds since 0001-01-01 00:00:00";
inline constexpr std::string_view kTimeCalendar = "365_day";

// Global attributes every file carries besides Conventions. Plain descriptions of what
// produced the file: no names of people or institutions.
struct FileDescription {
  std::string title;    // e.g. "plateau coarse run: double_gyre with closure eady"
  std::string history;  // e.g. "plateau run cases/double_gyre.toml -c eady"
  std::string source;   // e.g. "plateau 0.1.0, model 3f2a..."
};

// One double-precision variable. Dimensions are named outermost first; the unlimited time
// dimension, if used, must come first.
struct VariableSpec {
  std::string name;
  std::vector<std::string> dimensions;
  std::string units;          // UDUNITS text, e.g. "m2 s-1"
  std::string long_name;      // a description for people
  std::string standard_name;  // the CF standard name, or empty where the CF table has none
  bool compress = true;       // zlib deflate level 1 with the shuffle filter
};

class NetcdfWriter {
 public:
  // Creates the temporary file (NC_NETCDF4) and writes the global attributes Conventions,
  // title, history and source.
  NetcdfWriter(std::filesystem::path final_path, const FileDescription& description);
  ~NetcdfWriter();
  NetcdfWriter(const NetcdfWriter&) = delete;
  NetcdfWriter& operator=(const NetcdfWriter&) = delete;

  // A fixed-length dimension without a coordinate variable.
  void add_dimension(std::string_view name, std::size_t length);
  // The unlimited dimension `time` and its coordinate variable (double, seconds since the run's
  // start; see kTimeUnits and kTimeCalendar). Fill it with write_time().
  void add_time_dimension();
  // Dimension x (or y) of the given length and its coordinate variable holding `x_m` (`y_m`),
  // in m, axis X (Y).
  void add_x_coordinate(std::span<const double> x_m);
  void add_y_coordinate(std::span<const double> y_m);
  // Dimension layer of length `layer_count` and its integer coordinate 1..layer_count.
  void add_layer_coordinate(int layer_count);

  // Defines a double variable with units, long_name and (if given) standard_name.
  void define_variable(const VariableSpec& spec);

  // Attributes of a variable: text, one double, several doubles, a 32- or 64-bit integer.
  void put_attribute(std::string_view variable, std::string_view name, std::string_view value);
  void put_attribute(std::string_view variable, std::string_view name, double value);
  void put_attribute(std::string_view variable, std::string_view name,
                     std::span<const double> values);
  void put_attribute(std::string_view variable, std::string_view name, int value);
  void put_attribute(std::string_view variable, std::string_view name, std::int64_t value);
  // Global attributes, same kinds.
  void put_global_attribute(std::string_view name, std::string_view value);
  void put_global_attribute(std::string_view name, double value);
  void put_global_attribute(std::string_view name, int value);
  void put_global_attribute(std::string_view name, std::int64_t value);

  // The whole variable. For a variable along time, `values` holds whole records and they are
  // written as records 0, 1, ...; otherwise its size must equal the variable's.
  void write(std::string_view variable, std::span<const double> values);
  // Record `record` (0-based) of a variable whose first dimension is time; `values` holds one
  // record (the product of the other dimensions).
  void write_record(std::string_view variable, std::size_t record, std::span<const double> values);
  // Record `record` of the time coordinate: model time in s since the run's start.
  void write_time(std::size_t record, double seconds);

  // Closes the file and renames it onto the final name. Nothing may be written afterwards.
  void close();

  [[nodiscard]] const std::filesystem::path& final_path() const noexcept;

 private:
  struct State;
  std::unique_ptr<State> state_;
};

// A variable's values with its dimensions, as read back.
struct NetcdfArray {
  std::vector<std::string> dimensions;  // outermost first
  std::vector<std::size_t> shape;       // the length of each dimension
  std::vector<double> values;           // C order, last dimension fastest
};

class NetcdfReader {
 public:
  explicit NetcdfReader(std::filesystem::path path);
  ~NetcdfReader();
  NetcdfReader(const NetcdfReader&) = delete;
  NetcdfReader& operator=(const NetcdfReader&) = delete;

  [[nodiscard]] bool has_dimension(std::string_view name) const;
  [[nodiscard]] std::size_t dimension_length(std::string_view name) const;
  [[nodiscard]] bool has_variable(std::string_view name) const;
  [[nodiscard]] std::vector<std::string> variable_names() const;

  // Any numeric variable, converted to double.
  [[nodiscard]] NetcdfArray read(std::string_view variable) const;
  // One record along the variable's first dimension (time); the result omits that dimension.
  [[nodiscard]] NetcdfArray read_record(std::string_view variable, std::size_t record) const;

  [[nodiscard]] bool has_attribute(std::string_view variable, std::string_view name) const;
  [[nodiscard]] std::string string_attribute(std::string_view variable,
                                             std::string_view name) const;
  // A numeric attribute, every value converted to double.
  [[nodiscard]] std::vector<double> double_attribute(std::string_view variable,
                                                     std::string_view name) const;
  // An integer attribute of exactly one value.
  [[nodiscard]] std::int64_t int_attribute(std::string_view variable, std::string_view name) const;

  [[nodiscard]] bool has_global_attribute(std::string_view name) const;
  [[nodiscard]] std::string global_string_attribute(std::string_view name) const;
  [[nodiscard]] std::vector<double> global_double_attribute(std::string_view name) const;
  [[nodiscard]] std::int64_t global_int_attribute(std::string_view name) const;

  [[nodiscard]] const std::filesystem::path& path() const noexcept { return path_; }

 private:
  [[nodiscard]] int varid(std::string_view variable) const;
  [[nodiscard]] NetcdfArray read_slab(std::string_view variable, bool one_record,
                                      std::size_t record) const;
  [[nodiscard]] std::string text_attribute(int var, std::string_view variable,
                                           std::string_view name) const;
  [[nodiscard]] std::vector<double> numeric_attribute(int var, std::string_view variable,
                                                      std::string_view name) const;
  [[nodiscard]] std::int64_t integer_attribute(int var, std::string_view variable,
                                               std::string_view name) const;

  std::filesystem::path path_;
  int ncid_ = -1;
};

}  // namespace plateau::io
