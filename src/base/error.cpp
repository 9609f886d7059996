#include "planmill/base/error.hpp"

namespace planmill {
namespace {
std::string format(const InputError::Where& where, const std::string& problem,
                   const std::string& remedy) {
  std::string text = where.file;
  if (where.line > 0) text += ":" + std::to_string(where.line);
  if (!text.empty()) text += ": ";
  if (!where.column.empty()) text += "'" + where.column + "': ";
  text += problem;
  if (!remedy.empty()) text += "; " + remedy;
  return text;
}
}  // namespace

InputError::InputError(Where where, const std::string& problem, const std::string& remedy)
    : std::runtime_error(format(where, problem, remedy)), where_(std::move(where)) {}

}  // namespace planmill
