// "Did you mean": the edit distance and the choice of close names.
#include "core/suggest.h"

#include <doctest/doctest.h>

using keel::closest;
using keel::edit_distance;
using Names = std::vector<std::string>;

// The distances below are the textbook examples (from memory): kitten to
// sitting is 3 (Levenshtein's measure, the usual worked example); "ca" to
// "abc" is 3 under optimal string alignment, which never edits a swapped pair
// again (unrestricted Damerau-Levenshtein gives 2).
TEST_CASE("suggest: edit distance of the textbook examples") {
  CHECK(edit_distance("kitten", "sitting") == 3);
  CHECK(edit_distance("ca", "abc") == 3);
  CHECK(edit_distance("", "abc") == 3);
  CHECK(edit_distance("abc", "") == 3);
  CHECK(edit_distance("holdings", "holdings") == 0);
}

TEST_CASE("suggest: a swap of neighbouring letters costs one") {
  CHECK(edit_distance("recrod", "record") == 1);
  CHECK(edit_distance("acb", "abc") == 1);
}

TEST_CASE("suggest: one letter dropped, added or changed is found") {
  const Names commands{"holdings", "history", "lots", "gains", "record"};
  CHECK(closest("holdngs", commands) == Names{"holdings"});
  CHECK(closest("recrod", commands) == Names{"record"});
  CHECK(closest("lot", commands) == Names{"lots"});
  CHECK(closest("gainz", commands) == Names{"gains"});
}

TEST_CASE("suggest: every name at the smallest distance, in the given order") {
  CHECK(closest("lits", Names{"lift", "lots", "list"}) == Names{"lots", "list"});
}

TEST_CASE("suggest: a beginning of a name suggests the names it starts") {
  CHECK(closest("hold", Names{"holdings", "history", "holdout"}) == Names{"holdings", "holdout"});
  CHECK(closest("st", Names{"statement", "status", "lots"}) == Names{"statement", "status"});
}

TEST_CASE("suggest: short words allow one edit, longer ones two") {
  CHECK(closest("lxts", Names{"lots"}) == Names{"lots"});
  CHECK(closest("lxxs", Names{"lots"}).empty());
  CHECK(closest("hxldxngs", Names{"holdings"}) == Names{"holdings"});
  CHECK(closest("hxxdxngs", Names{"holdings"}).empty());
}

TEST_CASE("suggest: case does not count") {
  CHECK(closest("Holdings", Names{"holdings"}) == Names{"holdings"});
  CHECK(closest("--AS-OFF", Names{"--as-of", "--account"}) == Names{"--as-of"});
}

TEST_CASE("suggest: nothing close, nothing suggested") {
  CHECK(closest("zebra", Names{"holdings", "record"}).empty());
  CHECK(closest("", Names{"holdings"}).empty());
  CHECK(closest("anything", Names{}).empty());
}
