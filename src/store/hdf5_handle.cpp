// StoreError and the HDF5 error-stack text it carries; the shared string type and attribute writers.
#include "planmill/store/hdf5_handle.hpp"

namespace planmill {
namespace {

herr_t append_entry(unsigned depth, const H5E_error2_t* e, void* data) {
  auto& text = *static_cast<std::string*>(data);
  if (depth > 0) text += "; ";
  text += e->func_name ? e->func_name : "?";
  text += ": ";
  text += e->desc ? e->desc : "";
  return 0;
}

std::string message(const std::string& path, const std::string& action, const std::string& detail) {
  std::string m = path + ": " + action;
  if (!detail.empty()) m += ": " + detail;
  return m;
}

}  // namespace

StoreError::StoreError(std::string path, std::string action, std::string detail)
    : std::runtime_error(message(path, action, detail)),
      path_(std::move(path)),
      action_(std::move(action)) {}

std::string hdf5_error_stack() {
  std::string text;
  (void)H5Ewalk2(H5E_DEFAULT, H5E_WALK_DOWNWARD, append_entry, &text);
  (void)H5Eclear2(H5E_DEFAULT);
  return text;
}

void silence_hdf5_errors() noexcept { (void)H5Eset_auto2(H5E_DEFAULT, nullptr, nullptr); }

H5Type utf8_string_type(const std::string& path) {
  H5Type t = checked<H5Type>(H5Tcopy(H5T_C_S1), path, "making a string type");
  check(H5Tset_size(t.get(), H5T_VARIABLE), path, "making a string type");
  check(H5Tset_cset(t.get(), H5T_CSET_UTF8), path, "making a string type");
  return t;
}

void write_attribute(hid_t object, const char* name, hid_t type, const void* value,
                     const std::string& path) {
  if (H5Aexists(object, name) > 0) check(H5Adelete(object, name), path, "replacing an attribute");
  H5Dataspace space = checked<H5Dataspace>(H5Screate(H5S_SCALAR), path, "writing an attribute");
  H5Attribute attr =
      checked<H5Attribute>(H5Acreate2(object, name, type, space.get(), H5P_DEFAULT, H5P_DEFAULT),
                           path, (std::string("creating attribute ") + name).c_str());
  check(H5Awrite(attr.get(), type, value), path,
        (std::string("writing attribute ") + name).c_str());
}

void write_string_attribute(hid_t object, const char* name, const std::string& value,
                            const std::string& path) {
  H5Type t = utf8_string_type(path);
  const char* p = value.c_str();
  write_attribute(object, name, t.get(), &p, path);
}

}  // namespace planmill
