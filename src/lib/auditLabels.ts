/** The audit log's action codes in words people read. Unknown codes show as they are. */
const labels: Record<string, string> = {
  "auth.signed_in": "Signed in",
  "auth.signed_out": "Signed out",
  "auth.sign_in_failed": "Sign-in failed",
  "auth.throttled": "Sign-in refused (too many failures)",
  "user.created": "Person added",
  "user.role_changed": "Role changed",
  "user.deactivated": "Person deactivated",
  "user.reactivated": "Person reactivated",
  "user.details_changed": "Person's details changed",
  "user.profile_changed": "Own profile changed",
  "user.password_changed": "Own password changed",
  "user.password_reset": "Password reset by a manager",
  "demo.seeded": "Demo plant created",
  "gateway.created": "Gateway added",
  "gateway.revoked": "Gateway revoked",
  "api_token.created": "API token made",
  "api_token.revoked": "API token revoked",
  "sensor.updated": "Sensor named, placed or retired",
  "sensor.calibration_recorded": "Calibration check recorded",
  "area.created": "Area added",
  "upload.imported": "Logger file imported",
};

export function auditLabel(action: string): string {
  return labels[action] ?? action;
}
