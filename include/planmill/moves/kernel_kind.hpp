#pragma once
// The three kernels by name: what a job file's sampler.kernel chooses and what a Kernel says it is.
namespace planmill {

enum class KernelKind { recombination, merge_split, flip };

// "recombination", "merge-split", "flip" (the job file's words).
[[nodiscard]] const char* kernel_name(KernelKind kind) noexcept;

}  // namespace planmill
