// The forms of a proposal (rules/propose.h) and of saved proposals: terminal
// text and JSON.
//
// Contract
//  - Text: the screen, the orders and the result, then the notes and the
//    cautions; money with two places, weights as percentages; user text goes
//    through printable().
//  - JSON (core/json.h): decimals as exact strings, z-scores and weights of
//    the screen as numbers, absent figures as null; `proposal_id` only when
//    the proposal was saved.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "report/table.h"
#include "rules/plan_propose.h"
#include "rules/propose.h"
#include "store/proposals.h"

namespace keel::report {

std::string proposal_text(const rules::Proposal& p, const Style& style);
std::string proposal_json(const rules::Proposal& p, std::optional<std::int64_t> saved_id);

// A plan's proposal (rules/plan_propose.h): each part's screen, targets and
// orders, then each pool's netted orders and result, the unmanaged holdings,
// the planned cash (never booked), the notes and the cautions.
std::string plan_proposal_text(const rules::PlanProposal& p, const Style& style);
// `saved_id`: the proposal's number when --save kept it.
std::string plan_proposal_json(const rules::PlanProposal& p,
                               std::optional<std::int64_t> saved_id = std::nullopt);

std::string proposals_list_text(const std::vector<store::ProposalRow>& all, const Style& style);
std::string proposals_list_json(const std::vector<store::ProposalRow>& all);

std::string review_text(const rules::Review& r, const Style& style);
std::string review_json(const rules::Review& r);

}  // namespace keel::report
