import { type RouteConfig, index, layout, prefix, route } from "@react-router/dev/routes";

// Every page and API route is listed here. Each route module authorises its own loader and action
// with requireUser(request, { roles }); the role-gated sections are grouped for readability only.
export default [
  route("sign-in", "routes/auth/sign-in.tsx"),
  route("sign-out", "routes/auth/sign-out.ts"),
  route("forgot-password", "routes/auth/forgot-password.tsx"),
  route("reset-password/:token", "routes/auth/reset-password.tsx"),

  layout("routes/app-layout.tsx", [
    index("routes/overview.tsx"),
    route("account", "routes/account.tsx"),

    // Site dashboards (every role) and site settings (officers and admins).
    route("sites/:siteCode", "routes/sites/site.tsx"),
    route("sites/:siteCode/settings", "routes/sites/settings.tsx"),
    route("compare", "routes/compare.tsx"),

    // Logger file uploads and the import profiles that read them (technicians, officers, admins).
    route("uploads", "routes/uploads/uploads.tsx"),
    route("uploads/:uploadId", "routes/uploads/upload.tsx"),
    route("import-profiles", "routes/import-profiles/profiles.tsx"),
    route("import-profiles/new", "routes/import-profiles/profile-new.tsx"),
    route("import-profiles/:profileId", "routes/import-profiles/profile.tsx"),

    // Field visits (technicians record, officers may change) and the review of corrections and
    // periods of record (officers and admins).
    route("visits", "routes/visits/visits.tsx"),
    route("visits/new", "routes/visits/new.tsx"),
    route("visits/:visitId", "routes/visits/visit.tsx"),
    route("visits/:visitId/edit", "routes/visits/edit.tsx"),
    route("corrections", "routes/corrections/corrections.tsx"),
    route("sites/:siteCode/corrections", "routes/corrections/site.tsx"),

    // Weekly summaries, their printable report, and site reports over any days (officers, managers, admins).
    route("summaries", "routes/summaries/week.tsx"),
    route("summaries/sites/:siteCode", "routes/summaries/site.tsx"),
    route("reports/site", "routes/reports/site.tsx"),

    // Alert rules (each role sees the rules that tell it; officers and admins change them), the
    // review of exceedances (officers and admins; others open events they were told about) and
    // each person's notifications.
    route("alert-rules", "routes/alert-rules/rules.tsx"),
    route("alert-rules/new", "routes/alert-rules/new.tsx"),
    route("alert-rules/:ruleId", "routes/alert-rules/rule.tsx"),
    route("exceedances", "routes/exceedances/exceedances.tsx"),
    route("exceedances/:exceedanceId", "routes/exceedances/exceedance.tsx"),
    route("notifications", "routes/notifications.tsx"),

    // Administration (admin role only).
    ...prefix("admin", [
      route("people", "routes/admin/people.tsx"),
      route("people/:personId", "routes/admin/person.tsx"),
      route("sites", "routes/admin/sites.tsx"),
      route("sites/new", "routes/admin/site-new.tsx"),
      route("sites/:siteId", "routes/admin/site.tsx"),
      route("loggers", "routes/admin/loggers.tsx"),
      route("loggers/new", "routes/admin/logger-new.tsx"),
      route("loggers/:loggerId", "routes/admin/logger.tsx"),
      route("outbox", "routes/admin/outbox.tsx"),
    ]),

    // Lab checks of grab-sample analyses (officers and admins).
    route("lab", "routes/lab/samples.tsx"),
    route("lab/new", "routes/lab/new.tsx"),
    route("lab/:sampleId", "routes/lab/sample.tsx"),
    route("lab/:sampleId/edit", "routes/lab/edit.tsx"),

  ]),

  // The printable weekly report stands outside the app's frame (no navigation on paper).
  route("summaries/:week/print", "routes/summaries/print.tsx"),
  route("api/health", "routes/api/health.ts"),
  route("api/uploads", "routes/api/uploads/index.ts"),
  route("api/uploads/:uploadId/errors.csv", "routes/api/uploads/errors-csv.ts"),
  route("api/sites/:siteId/series", "routes/api/sites/series.ts"),
  route("api/sites/:siteId/export.csv", "routes/api/sites/export-csv.ts"),
  route("api/lab/template.csv", "routes/api/lab/template-csv.ts"),
  route("api/visits/photos", "routes/api/visits/photos.ts"),
  route("api/summaries/:week/table.csv", "routes/api/summaries/table-csv.ts"),
  route("*", "routes/not-found.tsx"),
] satisfies RouteConfig;
