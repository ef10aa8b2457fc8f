import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/settings";
import { Field, FormErrors, SelectField } from "#app/components/forms.tsx";
import { describeCompensation } from "#app/jobs/derive.server.ts";
import { parameterLabel } from "#app/lib/series/parameters.ts";
import { tdsFactorWarning } from "#app/lib/water/tds.ts";
import { findSiteByCode, saveSiteSettings, thresholdsOf } from "#app/models/site-settings.server.ts";
import { requireUser } from "#app/utils/auth.server.ts";
import { REVIEW_ROLES } from "#app/utils/permissions.ts";
import { COMPENSATION_LABELS } from "#app/utils/site-labels.ts";
import { settingsSchema, THRESHOLD_FIELDS, thresholdsFromInput, type ThresholdField } from "./+shared/settings-schema.ts";
import { SavedNotice } from "#app/routes/admin/+shared/ui.tsx";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Settings · ${data?.site.code ?? "Site"} · Ripplemark` }];

async function siteOr404(code: string) {
  const site = await findSiteByCode(code);
  if (!site) throw data("No such site.", { status: 404 });
  return site;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request, { roles: REVIEW_ROLES });
  const site = await siteOr404(params.siteCode);
  const thresholds = await thresholdsOf(site.id);
  const defaults: Record<string, string> = {
    compensationMethod: site.compensation_method,
    alphaPercentPerC: String(Math.round(site.alpha_per_c * 100 * 1e6) / 1e6),
    referenceC: String(site.reference_c),
    tdsFactor: String(site.tds_factor),
  };
  for (const [field, [parameter, bound]] of Object.entries(THRESHOLD_FIELDS)) {
    const t = thresholds.find((x) => x.parameter === parameter && x.bound === bound);
    if (t) defaults[field] = String(t.value);
  }
  return {
    site: { code: site.code, name: site.name, referenceC: site.reference_c, compensation: describeCompensation(site), settingsVersion: site.settings_version },
    defaults,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireUser(request, { roles: REVIEW_ROLES });
  const site = await siteOr404(params.siteCode);
  const formData = await request.formData();
  if (formData.get("intent") !== "save") throw data("Unknown action.", { status: 400 });
  const submission = parseWithZod(formData, { schema: settingsSchema });
  if (submission.status !== "success") return data({ result: submission.reply() }, { status: 400 });
  const v = submission.value;
  const result = await saveSiteSettings(user.id, site.id, {
    compensation_method: v.compensationMethod,
    // Natural-water compensation has no coefficient: keep the stored one for a later switch back.
    alpha_per_c: v.compensationMethod === "linear" && v.alphaPercentPerC !== undefined ? v.alphaPercentPerC / 100 : site.alpha_per_c,
    reference_c: v.referenceC,
    tds_factor: v.tdsFactor,
    thresholds: thresholdsFromInput(v),
  });
  throw redirect(`/sites/${site.code}/settings?saved=${result.outcome}`);
}

const SAVED = {
  recompute: "Settings saved. The site’s history is being recomputed with them; charts show the new values when it finishes (raw readings are unchanged).",
  saved: "Thresholds saved.",
  unchanged: "Nothing to save: the settings were already like that.",
};

export default function SiteSettings({ loaderData, actionData }: Route.ComponentProps) {
  const { site, defaults } = loaderData;
  const navigation = useNavigation();
  const [form, fields] = useForm({
    id: "site-settings",
    lastResult: actionData?.result,
    defaultValue: defaults,
    onValidate: ({ formData }) => parseWithZod(formData, { schema: settingsSchema }),
    shouldRevalidate: "onBlur",
  });
  const [method, setMethod] = useState(defaults.compensationMethod);
  const [tds, setTds] = useState(defaults.tdsFactor);
  let warning: string | undefined;
  try {
    warning = tdsFactorWarning(Number(tds));
  } catch {
    warning = undefined;
  }
  const ref = Number(fields.referenceC.value ?? site.referenceC) || site.referenceC;
  const thresholdField = (name: ThresholdField, label: string, hint?: string) => (
    <Field key={name} label={label} meta={fields[name]} inputMode="decimal" hint={hint} />
  );
  return (
    <div className="max-w-3xl space-y-5">
      <p className="text-sm">
        <Link to={`/sites/${site.code}`} className="text-lake-700 underline"><span aria-hidden="true">← </span>{site.code} · {site.name}</Link>
      </p>
      <h1>Site settings</h1>
      <SavedNotice messages={SAVED} />
      <p className="text-ink-700">Now: {site.compensation} (settings version {site.settingsVersion}).</p>
      <Form method="post" {...getFormProps(form)} className="space-y-5">
        <input type="hidden" name="intent" value="save" />
        <FormErrors id={form.errorId} errors={form.errors} />
        <fieldset className="card grid gap-4 sm:grid-cols-2">
          <legend className="px-1 text-lg font-semibold">Derived values</legend>
          <p className="caution sm:col-span-2" id="recompute-note">
            Changing the compensation method, coefficient, reference temperature or TDS factor recomputes specific conductance, TDS and
            salinity for the site’s <strong>whole history</strong> in the background. Raw readings never change.
          </p>
          <div onChange={(e) => setMethod((e.target as unknown as HTMLSelectElement).value)}>
            <SelectField
              label="Temperature compensation"
              meta={fields.compensationMethod}
              options={[
                { value: "linear", label: `${COMPENSATION_LABELS.linear} (α)` },
                { value: "natural-water", label: `${COMPENSATION_LABELS["natural-water"]}, ISO 7888` },
              ]}
            />
          </div>
          {method === "linear" ? (
            <Field label="Coefficient α (% per °C)" meta={fields.alphaPercentPerC} inputMode="decimal" hint="Natural waters are usually 1.8–2.2 % per °C; 1.91 is common." />
          ) : (
            <p className="self-end text-sm text-ink-700">ISO 7888 tabulates the correction for natural waters; it takes no coefficient.</p>
          )}
          <SelectField label="Reference temperature" meta={fields.referenceC} options={[{ value: "25", label: "25 °C" }, { value: "20", label: "20 °C" }]} />
          <div onChange={(e) => setTds((e.target as unknown as HTMLInputElement).value)}>
            <Field label="TDS factor" meta={fields.tdsFactor} inputMode="decimal" hint="TDS estimate = factor × specific conductance. Between 0.5 and 1.0; usually 0.55–0.75." />
            {warning ? <p className="caution mt-2" role="status">{warning}.</p> : null}
          </div>
        </fieldset>
        <fieldset className="card grid gap-4 sm:grid-cols-2">
          <legend className="px-1 text-lg font-semibold">Display thresholds</legend>
          <p className="text-sm text-ink-700 sm:col-span-2">
            Drawn as lines on the charts and used for the site’s status on the overview. Leave a box empty for no threshold. These do not
            send alerts.
          </p>
          {thresholdField("sc25Upper", `${parameterLabel("sc25", ref)}, upper (µS/cm)`)}
          {thresholdField("sc25Lower", `${parameterLabel("sc25", ref)}, lower (µS/cm)`)}
          {thresholdField("temperatureUpper", "Water temperature, upper (°C)")}
          {thresholdField("tdsUpper", "TDS estimate, upper (mg/L)")}
          {thresholdField("salinityUpper", "Practical salinity, upper (PSS-78)", "For tidal and brackish sites.")}
          {thresholdField("depthLower", "Depth, lower (m)", "For example the lowest safe water level over a borehole logger.")}
          {thresholdField("phLower", "pH, lower")}
          {thresholdField("phUpper", "pH, upper")}
        </fieldset>
        <button type="submit" className="btn" disabled={navigation.state !== "idle"} aria-describedby="recompute-note">
          Save settings
        </button>
      </Form>
    </div>
  );
}
