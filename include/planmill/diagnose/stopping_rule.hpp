#pragma once
// When a run may stop on its verdict (`planmill run --until-converged`) and when `planmill
// diagnose` and the manifest call a run converged: the verdict (judge(), verdict.hpp) must pass
//  - on the whole record of every chain, and
//  - on the later half of every chain alone (its last N - floor(N/2) records),
// and every chain must hold at least rule.min_records records. Checking after every block and
// stopping at the first pass is a sequential test: the chance of a pass by luck grows with the
// number of checks (optional stopping). A record that has settled passes in its later half too;
// an early lucky pass, carried by a first half that happens to agree, does not. The split R-hat
// of Vehtari et al. (2021, Bayesian Analysis 16(2)) already compares the halves of each chain;
// judging the later half alone asks that the recent draws mix on their own.
#include <cstddef>
#include <span>
#include <string>
#include <string_view>

#include "planmill/diagnose/draw_matrix.hpp"
#include "planmill/diagnose/verdict.hpp"

namespace planmill::diagnose {

// One observable's draws; every observable given to check_stop has the same draws and chains.
struct NamedDraws {
  std::string_view name;
  DrawMatrix draws;
};

struct StopCheck {
  std::size_t records = 0;      // per chain
  std::size_t min_records = 0;  // the rule's
  std::size_t later_first = 0;  // first record (0-based) of the later half
  Verdict whole;                // on every record
  Verdict later;                // on records later_first..records-1 of every chain

  [[nodiscard]] bool long_enough() const { return records >= min_records; }
  [[nodiscard]] bool pass() const { return long_enough() && whole.pass && later.pass; }
  // Empty when pass(); otherwise which part failed, first of: "too short", "whole record",
  // "later half".
  [[nodiscard]] std::string failed_part() const;
  // One line: what passed or which part failed and why, e.g. "2 of 5 observables fail on the
  // later half (records 1200..2399 of each chain); the whole record passes".
  [[nodiscard]] std::string summary() const;
  // The verdict whose failures explain a fail: the later half's when the record is long enough
  // and passes whole, else the whole record's.
  [[nodiscard]] const Verdict& deciding() const {
    return long_enough() && whole.pass ? later : whole;
  }
};

// The step on matrices that assess_convergence() (convergence.hpp, the one path from recorded
// draws to a verdict) takes after it has cut the records. Pure: diagnoses every observable on the whole record and on its later half and judges both.
[[nodiscard]] StopCheck check_stop(std::span<const NamedDraws> observables, const VerdictRule& rule);

}  // namespace planmill::diagnose
