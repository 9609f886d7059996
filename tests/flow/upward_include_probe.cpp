// Not a test program: a source built as if it were part of graph/ that includes a header of run/,
// a part far above it. The test flow_upward_include_fails (tests/CMakeLists.txt) builds it and
// passes only when the compiler cannot find that header, i.e. when an include against the flow
// fails to build.
#include "planmill/graph/unit_graph.hpp"
#include "planmill/run/runner.hpp"
