/**
 * FHIR R4 validation with the `fhir` npm package (FHIR.js): structure, cardinality, datatypes and
 * required bindings from the R4 (v4.0.1) StructureDefinitions it ships. It carries no LOINC, so
 * LOINC and local codes give "not found in value set" warnings (example/extensible bindings);
 * those are left out here and the codes are checked against reference file §14a instead.
 */
import fhirPkg from 'fhir';

const { Fhir, ParseConformance, Versions } = fhirPkg;
const validator = new Fhir(new ParseConformance(true, Versions.R4));

export interface FhirMessage {
  severity?: string;
  message?: string;
  location?: string;
  resourceId?: string;
}

/** Errors, fatals and warnings other than missing terminology. Unexpected properties are errors. */
export function fhirProblems(resource: object): FhirMessage[] {
  const r = validator.validate(resource, { errorOnUnexpected: true });
  return (r.messages as FhirMessage[]).filter(
    (m) =>
      m.severity === 'error' || m.severity === 'fatal' || (m.severity === 'warning' && !/not found in value set/.test(m.message ?? '')),
  );
}
