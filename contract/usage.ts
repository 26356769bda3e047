// Reads nested result fields through the client types generated from
// ../openapi/openapi.json. Each read is pinned to its exact type with
// `Exact`, so the check fails if the document ever types a result as a bare
// object again (openapi-typescript makes that `Record<string, never>`, whose
// fields are `never`: assignable to anything, but not equal to a union).

import type { components, paths } from "./generated/api";

type Schemas = components["schemas"];

/** True only when A and B are the same type (never and any included). */
type Exact<A, B> = (<T>() => T extends A ? 1 : 2) extends <T>() => T extends B ? 1 : 2 ? true : false;
function assertExact<A, B>(proof: Exact<A, B>): void {
  void proof;
}

type VerdictWord = "within" | "approaching" | "exceeds" | "not_covered" | "not_computed";

// GET /v1/assessments/{assessment_id} → 200 → application/json.
type AssessmentShown =
  paths["/v1/assessments/{assessment_id}"]["get"]["responses"][200]["content"]["application/json"];

/** A position's verdict is the verdict word union, and a switch over it is exhaustive. */
export function positionVerdicts(a: AssessmentShown): VerdictWord[] {
  const positions = a.result.positions;
  assertExact<(typeof positions)[number]["verdict"], VerdictWord>(true);
  return positions.map((pos) => {
    const v: VerdictWord = pos.verdict;
    switch (v) {
      case "within":
      case "approaching":
      case "exceeds":
      case "not_covered":
      case "not_computed":
        return v;
      default: {
        const unreachable: never = v;
        return unreachable;
      }
    }
  });
}

/** An area's share of cells at or above a level is a number (0–1) or null. */
export function worstSharePercent(area: Schemas["AreaResult"]): number {
  const comparison = area.comparisons[0];
  if (comparison === undefined) return 0;
  const share = comparison.share_at_or_above_level;
  assertExact<typeof share, number | null>(true);
  assertExact<typeof comparison.verdict, VerdictWord>(true);
  return (share ?? 0) * 100;
}

// GET /v1/surveys/{survey_id} → 200 → application/json.
type SurveyShown = paths["/v1/surveys/{survey_id}"]["get"]["responses"][200]["content"]["application/json"];

/** A survey circuit's fitted scale is a number (or null when not estimated). */
export function fittedCurrents(s: SurveyShown): number[] {
  return s.analysis.load_fit.circuits.map((c) => {
    assertExact<typeof c.scale, number | null>(true);
    assertExact<
      typeof c.status,
      "fitted" | "at_bound" | "poorly_determined" | "unidentifiable" | "ill_conditioned" | "not_converged"
    >(true);
    return (c.scale ?? 0) * c.stated_a;
  });
}

/** Error answers share one problem type, with pointers. */
export function firstPointer(p: Schemas["ProblemDoc"]): string | undefined {
  assertExact<NonNullable<typeof p.errors>[number]["pointer"], string>(true);
  return p.errors?.[0]?.pointer;
}

/** The site document accepts a georeference (the document once forgot it). */
export const placed: Schemas["SiteDoc"] = {
  frequency_hz: 50,
  conductors: [],
  georeference: { origin_lon_deg: 7.45, origin_lat_deg: 46.95 },
};
