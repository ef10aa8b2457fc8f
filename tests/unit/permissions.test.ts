import { describe, expect, it } from "vitest";
import { ADMIN_ONLY, ANY_ROLE, CAPABILITIES, isRole, READ_ROLES, REVIEW_ROLES, roleAllowed, userCan } from "#app/utils/permissions.ts";
import { safeRedirect } from "#app/utils/auth-redirect.ts";

describe("role checks", () => {
  it("recognises exactly the four roles", () => {
    for (const r of ["technician", "officer", "manager", "admin"]) expect(isRole(r)).toBe(true);
    for (const r of ["Admin", "root", "", null, undefined, 3]) expect(isRole(r)).toBe(false);
  });

  it("lets a role through only when listed", () => {
    expect(roleAllowed("admin", ADMIN_ONLY)).toBe(true);
    expect(roleAllowed("officer", ADMIN_ONLY)).toBe(false);
    expect(roleAllowed("manager", REVIEW_ROLES)).toBe(false);
    expect(roleAllowed("manager", READ_ROLES)).toBe(true);
    expect(roleAllowed("technician", READ_ROLES)).toBe(false);
    for (const r of ANY_ROLE) expect(roleAllowed(r, ANY_ROLE)).toBe(true);
  });

  it("maps capabilities to roles as the design says", () => {
    // DESIGN.md: managers read, officers review, technicians upload and visit, admins administer.
    expect(userCan({ role: "manager" }, "read-summaries")).toBe(true);
    expect(userCan({ role: "manager" }, "upload-files")).toBe(false);
    expect(userCan({ role: "manager" }, "review-exceedances")).toBe(false);
    expect(userCan({ role: "technician" }, "upload-files")).toBe(true);
    expect(userCan({ role: "technician" }, "enter-lab-results")).toBe(false);
    expect(userCan({ role: "officer" }, "review-exceedances")).toBe(true);
    expect(userCan({ role: "officer" }, "administer")).toBe(false);
    expect(userCan(null, "view-sites")).toBe(false);
    // admin has every capability
    for (const c of Object.keys(CAPABILITIES) as (keyof typeof CAPABILITIES)[]) expect(userCan({ role: "admin" }, c)).toBe(true);
  });
});

describe("safeRedirect", () => {
  it("keeps same-site paths and refuses others", () => {
    expect(safeRedirect("/admin/people?x=1")).toBe("/admin/people?x=1");
    expect(safeRedirect("//evil.example/x")).toBe("/");
    expect(safeRedirect("/\\evil.example")).toBe("/");
    expect(safeRedirect("https://evil.example")).toBe("/");
    expect(safeRedirect(null, "/home")).toBe("/home");
  });
});
