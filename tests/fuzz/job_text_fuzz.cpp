// Fuzz target: the job-file parser. Any text must give a JobSpec or an InputError with a message;
// an accepted job must keep its text and satisfy the documented ranges.
#include <cstdint>

#include "fuzz_support.hpp"
#include "planmill/job/job.hpp"

using namespace planmill;

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  fuzz::expect_only_input_errors([&] {
    const std::string_view text = fuzz::as_text(data, size);
    const JobSpec job = parse_job_text(text, "dir/job.toml");
    if (job.text != text) fuzz::bug("job text not kept");
    if (job.districts < 1 || job.sampler.chains < 1 || job.sampler.burn_in >= job.sampler.steps)
      fuzz::bug("accepted a value outside its documented range");
    if (job.map.units_path.empty() || job.map.id_column.empty()) fuzz::bug("accepted a job without a map");
  });
  return 0;
}
