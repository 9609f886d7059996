#pragma once
// The manifest of a run folder (RUNDIR/manifest.json, docs/manifest.md): provenance (versions,
// job and input hashes, sessions), an index of chains and plan files with their checksums and
// integrity, totals, and the convergence diagnostics. Built from the committed run state, the
// plan files and the input files as they are now; written atomically.
#include <cstdint>
#include <nlohmann/json.hpp>
#include <vector>

#include "planmill/manifest/run_diagnostics.hpp"
#include "planmill/run/blind_check.hpp"
#include "planmill/run/run_reader.hpp"

namespace planmill {

// 2: the diagnostics section in the one verdict shape (docs/diagnostics.md, "JSON").
// 3: the blind check (`blind_check`, run/blind_check.hpp).
inline constexpr std::int64_t kManifestSchemaVersion = 3;

// `problems` is reader.verify() (the ensemble), `rung_problems` reader.verify_rungs() (the hotter
// rungs of ladders that recorded every rung; they never touch the diagnostics); `diagnostics`
// goes in as the "diagnostics" section, `blind` as "blind_check" (none: "not checked", as by
// `planmill diagnose`, which draws no plans).
[[nodiscard]] nlohmann::ordered_json build_manifest(const RunReader& reader,
                                                    const std::vector<ChainProblem>& problems,
                                                    const std::vector<ChainProblem>& rung_problems,
                                                    const RunDiagnostics& diagnostics,
                                                    const BlindCheck* blind = nullptr);

// The "blind_check" section (docs/manifest.md).
[[nodiscard]] nlohmann::ordered_json blind_check_json(const BlindCheck& check);

// Replaces RUNDIR/manifest.json atomically (a reader sees the old or the new file, never half).
void write_manifest(const RunLayout& layout, const nlohmann::ordered_json& manifest);

// Replaces only the "diagnostics" section of RUNDIR/manifest.json; when there is no manifest of
// this schema version yet (or it cannot be parsed), builds and writes the whole manifest (with
// reader.verify_rungs() for its rung problems).
// Returns true when a whole new manifest was written.
bool write_manifest_diagnostics(const RunReader& reader, const std::vector<ChainProblem>& problems,
                                const RunDiagnostics& diagnostics);

}  // namespace planmill
