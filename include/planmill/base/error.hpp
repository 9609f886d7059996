#pragma once
// Typed errors carrying where the problem is. Library code throws; only the CLI picks exit codes.
#include <cstddef>
#include <stdexcept>
#include <string>

namespace planmill {

// Bad input from a user's file or job: the CLI prints what() on one line and exits with status 2.
// what() reads "FILE:LINE: column 'X': what is wrong; what to do" with the parts that are known.
class InputError : public std::runtime_error {
 public:
  struct Where {
    std::string file;         // path as the user gave it
    std::size_t line = 0;     // 1-based; 0 = not known / whole file
    std::string column;       // CSV column or TOML key; empty = not known
  };
  InputError(Where where, const std::string& problem, const std::string& remedy = {});

  [[nodiscard]] const Where& where() const noexcept { return where_; }

 private:
  Where where_;
};

// A valid input for which the requested work cannot be done (an infeasible tolerance, a seed plan
// that cannot be found within the effort bound). Exit status 2 as well, but not tied to a line.
class InfeasibleError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

// An output that could not be written (no space left, no permission, an I/O error). Exit status 5:
// nothing written before is damaged, so the same command can be run again (or a run resumed) once
// the cause is gone. what() names the file and the system's reason.
class OutputError : public std::runtime_error {
 public:
  using std::runtime_error::runtime_error;
};

}  // namespace planmill
