// StoreError and the HDF5 error-stack text it carries.
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

}  // namespace planmill
