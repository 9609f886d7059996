#pragma once
// RAII ownership of HDF5 ids, keyed on their close function, and the typed error every failing
// HDF5 call in the store turns into, and the attribute helpers the store and export share.
// Only the store and export include this header.
#include <hdf5.h>

#include <stdexcept>
#include <string>
#include <utility>

namespace planmill {

// A failed HDF5 call: what() reads "PATH: WHAT WAS BEING DONE: HDF5 error stack".
class StoreError : public std::runtime_error {
 public:
  StoreError(std::string path, std::string action, std::string detail = {});
  [[nodiscard]] const std::string& path() const noexcept { return path_; }
  [[nodiscard]] const std::string& action() const noexcept { return action_; }

 private:
  std::string path_;
  std::string action_;
};

// Text of the current HDF5 error stack (collected with H5Ewalk2), then clears it.
[[nodiscard]] std::string hdf5_error_stack();
// Turns off HDF5's automatic printing of errors to stderr (the store reports them itself).
void silence_hdf5_errors() noexcept;

template <herr_t (*Close)(hid_t)>
class H5Handle {
 public:
  H5Handle() = default;
  explicit H5Handle(hid_t id) noexcept : id_(id) {}
  H5Handle(const H5Handle&) = delete;
  H5Handle& operator=(const H5Handle&) = delete;
  H5Handle(H5Handle&& other) noexcept : id_(std::exchange(other.id_, H5I_INVALID_HID)) {}
  H5Handle& operator=(H5Handle&& other) noexcept {
    if (this != &other) {
      reset();
      id_ = std::exchange(other.id_, H5I_INVALID_HID);
    }
    return *this;
  }
  ~H5Handle() { reset(); }

  [[nodiscard]] hid_t get() const noexcept { return id_; }
  [[nodiscard]] bool valid() const noexcept { return id_ >= 0; }
  void reset() noexcept { (void)close(); }
  // Closes the id now and returns HDF5's status (0 when there was nothing to close).
  herr_t close() noexcept {
    const herr_t status = id_ >= 0 ? Close(id_) : 0;
    id_ = H5I_INVALID_HID;
    return status;
  }

 private:
  hid_t id_ = H5I_INVALID_HID;
};

using H5File = H5Handle<H5Fclose>;
using H5Group = H5Handle<H5Gclose>;
using H5Dataset = H5Handle<H5Dclose>;
using H5Dataspace = H5Handle<H5Sclose>;
using H5PropList = H5Handle<H5Pclose>;
using H5Type = H5Handle<H5Tclose>;
using H5Attribute = H5Handle<H5Aclose>;

// Throws StoreError(path, action, stack) when id < 0; returns the handle otherwise.
template <typename Handle>
Handle checked(hid_t id, const std::string& path, const char* action) {
  if (id < 0) throw StoreError(path, action, hdf5_error_stack());
  return Handle(id);
}
inline void check(herr_t status, const std::string& path, const char* action) {
  if (status < 0) throw StoreError(path, action, hdf5_error_stack());
}

// A variable-length UTF-8 string type.
[[nodiscard]] H5Type utf8_string_type(const std::string& path);
// A scalar attribute of `object` (one already there of that name is replaced).
void write_attribute(hid_t object, const char* name, hid_t type, const void* value,
                     const std::string& path);
void write_string_attribute(hid_t object, const char* name, const std::string& value,
                            const std::string& path);

}  // namespace planmill
