/** Problem answers for the pour routes' refusals. */
import { describeRefusal, type AssignmentRefusal } from "@/domain/assignments";
import { badRequest, conflict, type FieldError } from "../http/responses";

/**
 * A refused sensor plan as a problem: sensors Plinth has never seen or cannot use are a bad
 * request (400, one error per sensor, `field` naming its place in the body); a sensor held by
 * another pour, already here, or a window that overlaps is a conflict (409).
 */
export function assignmentProblem(
  refusal: AssignmentRefusal,
  fieldOf: (sensorId: string) => string,
): Response {
  const detail = describeRefusal(refusal);
  switch (refusal.kind) {
    case "unknown": {
      const errors: FieldError[] = refusal.sensors.map((s) => ({
        field: fieldOf(s),
        error: `${s} is not a sensor Plinth has seen; register it first`,
      }));
      return badRequest(detail, errors);
    }
    case "unsuitable":
      return badRequest(
        detail,
        refusal.sensors.map((s) => ({
          field: fieldOf(s.sensor),
          error: `${s.sensor} is ${s.why}`,
        })),
      );
    default:
      return conflict(detail);
  }
}
