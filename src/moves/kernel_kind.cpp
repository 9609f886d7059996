#include "planmill/moves/kernel_kind.hpp"

namespace planmill {

const char* kernel_name(KernelKind kind) noexcept {
  switch (kind) {
    case KernelKind::recombination: return "recombination";
    case KernelKind::merge_split: return "merge-split";
    case KernelKind::flip: return "flip";
  }
  return "?";
}

}  // namespace planmill
