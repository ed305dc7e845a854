/**
 * Who may do what: the one table read by the middleware (pages and API alike), by each
 * API route's own guard, by the navigation, and by the role-matrix test.
 *
 * Roles, from the plant's point of view:
 * - manager: everything, including users, roles, gateways and settings;
 * - qc: mixes, calibration, breaks, alert rules, releases, and all an operator may do;
 * - operator: the live floor, pours, acknowledging alerts, logger uploads;
 * - viewer: reads everything except user administration; changes nothing.
 */
export const roles = ["manager", "qc", "operator", "viewer"] as const;
export type Role = (typeof roles)[number];

export const roleLabels: Record<Role, string> = {
  manager: "Manager",
  qc: "Quality control",
  operator: "Operator",
  viewer: "Viewer",
};

/** Each action and the roles that may take it. */
export const permissions = {
  /** Read plant data: pours, sensors, mixes, readings, alerts. */
  "plant.read": ["manager", "qc", "operator", "viewer"],
  /** One's own account: profile, password, units, theme. */
  "self.manage": ["manager", "qc", "operator", "viewer"],
  /** Create pours, assign sensors, acknowledge alerts, upload logger files. */
  "floor.operate": ["manager", "qc", "operator"],
  /** Mixes, calibration, cylinder breaks, alert rules, strip and ship releases. */
  "quality.manage": ["manager", "qc"],
  /** Users and roles. */
  "users.manage": ["manager"],
  /** Gateways, API tokens, sensors' identity and placement, plant settings. */
  "plant.admin": ["manager"],
  /** The audit log of sign-ins, role changes and every record. */
  "audit.read": ["manager"],
} as const satisfies Record<string, readonly Role[]>;

export type Action = keyof typeof permissions;

export function can(role: Role | null | undefined, action: Action): boolean {
  if (!role) return false;
  return (permissions[action] as readonly Role[]).includes(role);
}

type Method = "GET" | "POST" | "PATCH" | "PUT" | "DELETE";

/**
 * One route (page or API) as Astro names it under src/pages, with the action each method
 * needs. "public" needs nobody; "session" needs any signed-in user; "gateway" needs a
 * gateway's key (and only a gateway's).
 */
export type Requirement = Action | "public" | "session" | "gateway";
export interface RouteAccess {
  /** Astro route pattern, e.g. "/api/v1/users/[id]". */
  route: string;
  kind: "page" | "api";
  methods: Partial<Record<Method, Requirement>>;
  /** For the role-matrix test: a concrete path to call (defaults to the route). */
  sample?: string;
  /** A webhook from outside (no Origin, its own signature): exempt from the origin check. */
  webhook?: boolean;
  /** The status a permitted caller gets, where it is not 200 (the "not for your role" page). */
  permittedStatus?: number;
}

export const routeAccess: readonly RouteAccess[] = [
  // Pages
  { route: "/login", kind: "page", methods: { GET: "public" } },
  { route: "/", kind: "page", methods: { GET: "plant.read" } },
  { route: "/account", kind: "page", methods: { GET: "self.manage" } },
  { route: "/forbidden", kind: "page", methods: { GET: "session" }, permittedStatus: 403 },
  { route: "/team", kind: "page", methods: { GET: "users.manage" } },
  { route: "/audit", kind: "page", methods: { GET: "audit.read" } },
  { route: "/floor", kind: "page", methods: { GET: "plant.read" } },
  { route: "/sensors", kind: "page", methods: { GET: "plant.read" } },
  {
    route: "/sensors/[id]",
    kind: "page",
    methods: { GET: "plant.read" },
    sample: "/sensors/CB-07",
  },
  { route: "/gateways", kind: "page", methods: { GET: "plant.admin" } },
  { route: "/uploads", kind: "page", methods: { GET: "plant.read" } },
  { route: "/mixes", kind: "page", methods: { GET: "plant.read" } },
  { route: "/mixes/[id]", kind: "page", methods: { GET: "plant.read" }, sample: "/mixes/1" },
  { route: "/pours", kind: "page", methods: { GET: "plant.read" } },
  { route: "/pours/[id]", kind: "page", methods: { GET: "plant.read" }, sample: "/pours/1" },
  {
    route: "/pours/[id]/strength",
    kind: "page",
    methods: { GET: "plant.read" },
    sample: "/pours/1/strength",
  },
  {
    route: "/pours/[id]/history",
    kind: "page",
    methods: { GET: "plant.read" },
    sample: "/pours/1/history",
  },
  { route: "/ready", kind: "page", methods: { GET: "plant.read" } },
  { route: "/bins", kind: "page", methods: { GET: "plant.read" } },
  { route: "/dev/outbox", kind: "page", methods: { GET: "plant.admin" } },
  { route: "/alerts", kind: "page", methods: { GET: "plant.read" } },
  { route: "/alerts/rules", kind: "page", methods: { GET: "plant.read" } },
  { route: "/alerts/[id]", kind: "page", methods: { GET: "plant.read" }, sample: "/alerts/1" },
  { route: "/on-call", kind: "page", methods: { GET: "plant.read" } },
  // Sign-in API
  { route: "/api/auth/login", kind: "api", methods: { POST: "public" } },
  { route: "/api/auth/logout", kind: "api", methods: { POST: "session" } },
  { route: "/api/health", kind: "api", methods: { GET: "public" } },
  // Public JSON API
  { route: "/api/v1/me", kind: "api", methods: { GET: "self.manage", PATCH: "self.manage" } },
  { route: "/api/v1/me/password", kind: "api", methods: { POST: "self.manage" } },
  { route: "/api/v1/users", kind: "api", methods: { GET: "users.manage", POST: "users.manage" } },
  {
    route: "/api/v1/users/[id]",
    kind: "api",
    methods: { PATCH: "users.manage" },
    sample: "/api/v1/users/1",
  },
  {
    route: "/api/v1/users/[id]/password-reset",
    kind: "api",
    methods: { POST: "users.manage" },
    sample: "/api/v1/users/999999/password-reset",
  },
  { route: "/api/v1/audit", kind: "api", methods: { GET: "audit.read" } },
  // The description of this API
  { route: "/api/v1/openapi.json", kind: "api", methods: { GET: "public" } },
  // Readings in (gateways only)
  { route: "/api/v1/readings", kind: "api", methods: { POST: "gateway" } },
  // The live floor: server-sent events of readings as they are committed
  { route: "/api/v1/live", kind: "api", methods: { GET: "plant.read" } },
  // Sensors and areas
  { route: "/api/v1/areas", kind: "api", methods: { GET: "plant.read", POST: "plant.admin" } },
  { route: "/api/v1/sensors", kind: "api", methods: { GET: "plant.read" } },
  {
    route: "/api/v1/sensors/[id]",
    kind: "api",
    methods: { GET: "plant.read", PATCH: "plant.admin" },
    sample: "/api/v1/sensors/CB-07",
  },
  {
    route: "/api/v1/sensors/[id]/readings",
    kind: "api",
    methods: { GET: "plant.read" },
    sample: "/api/v1/sensors/CB-07/readings",
  },
  {
    route: "/api/v1/sensors/[id]/calibrations",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
    sample: "/api/v1/sensors/CB-07/calibrations",
  },
  // Gateways and API tokens
  { route: "/api/v1/gateways", kind: "api", methods: { GET: "plant.admin", POST: "plant.admin" } },
  {
    route: "/api/v1/gateways/[id]/revoke",
    kind: "api",
    methods: { POST: "plant.admin" },
    sample: "/api/v1/gateways/999999/revoke",
  },
  { route: "/api/v1/tokens", kind: "api", methods: { GET: "plant.admin", POST: "plant.admin" } },
  {
    route: "/api/v1/tokens/[id]/revoke",
    kind: "api",
    methods: { POST: "plant.admin" },
    sample: "/api/v1/tokens/999999/revoke",
  },
  // Mixes and calibration
  { route: "/api/v1/mixes", kind: "api", methods: { GET: "plant.read", POST: "quality.manage" } },
  {
    route: "/api/v1/mixes/[id]",
    kind: "api",
    methods: { GET: "plant.read", PATCH: "quality.manage" },
    sample: "/api/v1/mixes/1",
  },
  {
    route: "/api/v1/mixes/[id]/calibration",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
    sample: "/api/v1/mixes/1/calibration",
  },
  {
    route: "/api/v1/mixes/[id]/points",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
    sample: "/api/v1/mixes/1/points",
  },
  {
    route: "/api/v1/mixes/[id]/points/[pointId]",
    kind: "api",
    methods: { DELETE: "quality.manage" },
    sample: "/api/v1/mixes/1/points/999999",
  },
  {
    route: "/api/v1/mixes/[id]/points/upload",
    kind: "api",
    methods: { POST: "quality.manage" },
    sample: "/api/v1/mixes/1/points/upload",
  },
  // Pours, their strength, breaks and releases
  { route: "/api/v1/pours", kind: "api", methods: { GET: "plant.read", POST: "floor.operate" } },
  {
    route: "/api/v1/pours/[id]",
    kind: "api",
    methods: { GET: "plant.read", PATCH: "floor.operate" },
    sample: "/api/v1/pours/1",
  },
  {
    route: "/api/v1/pours/[id]/sensors",
    kind: "api",
    methods: { GET: "plant.read", POST: "floor.operate" },
    sample: "/api/v1/pours/1/sensors",
  },
  {
    route: "/api/v1/pours/[id]/strength",
    kind: "api",
    methods: { GET: "plant.read" },
    sample: "/api/v1/pours/1/strength",
  },
  {
    route: "/api/v1/pours/[id]/breaks",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
    sample: "/api/v1/pours/1/breaks",
  },
  {
    route: "/api/v1/pours/[id]/releases",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
    sample: "/api/v1/pours/1/releases",
  },
  {
    route: "/api/v1/pours/[id]/history.csv",
    kind: "api",
    methods: { GET: "plant.read" },
    sample: "/api/v1/pours/1/history.csv",
  },
  {
    route: "/api/v1/pours/[id]/report.pdf",
    kind: "api",
    methods: { GET: "plant.read" },
    sample: "/api/v1/pours/1/report.pdf",
  },
  { route: "/api/v1/ready", kind: "api", methods: { GET: "plant.read" } },
  { route: "/api/v1/bins", kind: "api", methods: { GET: "plant.read" } },
  // Notifications: what the local fakes received (demo and tests), and texts coming back
  { route: "/api/v1/dev/outbox", kind: "api", methods: { GET: "plant.admin" } },
  { route: "/api/v1/sms/inbound", kind: "api", methods: { POST: "public" }, webhook: true },
  // Logger uploads
  { route: "/api/v1/uploads", kind: "api", methods: { GET: "plant.read", POST: "floor.operate" } },
  { route: "/api/v1/uploads/preview", kind: "api", methods: { POST: "floor.operate" } },
  // Alerts: episodes, rules, the on-call rota
  { route: "/api/v1/alerts", kind: "api", methods: { GET: "plant.read" } },
  {
    route: "/api/v1/alerts/[id]",
    kind: "api",
    methods: { GET: "plant.read" },
    sample: "/api/v1/alerts/1",
  },
  {
    route: "/api/v1/alerts/[id]/ack",
    kind: "api",
    methods: { POST: "floor.operate" },
    sample: "/api/v1/alerts/999999/ack",
  },
  {
    route: "/api/v1/alert-rules",
    kind: "api",
    methods: { GET: "plant.read", POST: "quality.manage" },
  },
  {
    route: "/api/v1/alert-rules/[id]",
    kind: "api",
    methods: { GET: "plant.read", PATCH: "quality.manage", DELETE: "quality.manage" },
    sample: "/api/v1/alert-rules/999999",
  },
  { route: "/api/v1/on-call", kind: "api", methods: { GET: "plant.read", POST: "users.manage" } },
  {
    route: "/api/v1/on-call/[id]",
    kind: "api",
    methods: { PATCH: "users.manage", DELETE: "users.manage" },
    sample: "/api/v1/on-call/999999",
  },
];

const compiled = routeAccess.map((r) => ({
  access: r,
  pattern: new RegExp(
    "^" +
      r.route
        .replace(/[.+?^${}()|\\]/g, "\\$&")
        .replace(/\/\[\.\.\.[^\]]+\]/g, "(?:/.*)?")
        .replace(/\[[^\]]+\]/g, "[^/]+") +
      "/?$",
  ),
}));

/** The declared access of a path, or undefined when no route of Plinth's has that path. */
export function findRouteAccess(pathname: string): RouteAccess | undefined {
  return compiled.find((c) => c.pattern.test(pathname))?.access;
}

/** What a method on a route requires; undefined means the method is not offered there. */
export function requirementFor(access: RouteAccess, method: string): Requirement | undefined {
  const m = (method === "HEAD" ? "GET" : method) as Method;
  return access.methods[m];
}

/** Navigation: each role sees only the pages it may open. */
export const navigation: readonly { href: string; label: string; action: Action }[] = [
  { href: "/", label: "Plant", action: "plant.read" },
  { href: "/floor", label: "Live floor", action: "plant.read" },
  { href: "/alerts", label: "Alerts", action: "plant.read" },
  { href: "/pours", label: "Pours", action: "plant.read" },
  { href: "/ready", label: "Strip & ship", action: "plant.read" },
  { href: "/mixes", label: "Mixes", action: "plant.read" },
  { href: "/bins", label: "Bins", action: "plant.read" },
  { href: "/sensors", label: "Sensors", action: "plant.read" },
  { href: "/uploads", label: "Logger files", action: "plant.read" },
  { href: "/gateways", label: "Gateways", action: "plant.admin" },
  { href: "/team", label: "Team", action: "users.manage" },
  { href: "/on-call", label: "On call", action: "plant.read" },
  { href: "/audit", label: "Audit log", action: "audit.read" },
];
