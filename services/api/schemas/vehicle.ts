import { Type } from 'typebox';

/** Profile limits: wax thermostats are rated 60–110 °C, caps up to 250 kPa gauge, glycol up to 70 %. */
export const THERMOSTAT_MIN_C = 60;
export const THERMOSTAT_MAX_C = 110;
export const CAP_MAX_KPA = 250;
export const GLYCOL_MAX_PERCENT = 70;
/** Bus frames are decimated to this period (whole seconds, migration 0005). */
export const SAMPLE_PERIOD_MAX_S = 3600;

export const VehicleProfilePatchBody = Type.Object(
  {
    engineFamily: Type.Optional(
      Type.String({
        minLength: 1,
        maxLength: 64,
        description: 'engine family: vehicles of one family are compared with each other',
      }),
    ),
    thermostatOpenC: Type.Optional(
      Type.Number({
        minimum: THERMOSTAT_MIN_C,
        maximum: THERMOSTAT_MAX_C,
        description: 'nominal thermostat opening temperature, °C (default 88)',
      }),
    ),
    capPressureKpa: Type.Optional(
      Type.Number({
        minimum: 0,
        maximum: CAP_MAX_KPA,
        description: 'radiator/pressure cap rating, kPa gauge (default 100)',
      }),
    ),
    glycolPercent: Type.Optional(
      Type.Number({
        minimum: 0,
        maximum: GLYCOL_MAX_PERCENT,
        description: 'ethylene glycol share of the coolant, % (default 50), by mass unless glycolBasis is volume',
      }),
    ),
    glycolBasis: Type.Optional(
      Type.Union([Type.Literal('mass'), Type.Literal('volume')], {
        description:
          'how glycolPercent is given: mass (default, as the freezing tables) or volume (as workshops mix and refractometers read); ' +
          'volume is converted to mass with the densities of ethylene glycol (1.113 g/cm³) and water (0.998 g/cm³) at 20 °C, ignoring the small contraction on mixing',
      }),
    ),
    capPressure: Type.Optional(
      Type.Number({ minimum: 0, description: 'cap rating in capPressureUnit (instead of capPressureKpa)' }),
    ),
    capPressureUnit: Type.Optional(
      Type.Union([Type.Literal('kPa'), Type.Literal('psi'), Type.Literal('bar')], {
        description: 'unit of capPressure, gauge (default kPa)',
      }),
    ),
    depot: Type.Optional(
      Type.Union([Type.String({ minLength: 1, maxLength: 64 }), Type.Null()], {
        description:
          "id of the depot the vehicle works from (PUT /v1/depots/{depotId}); the depot's site sets the boiling point when the vehicle has no site of its own",
      }),
    ),
    siteAltitudeM: Type.Optional(
      Type.Union([Type.Number({ minimum: -500, maximum: 5000 }), Type.Null()], {
        description:
          'altitude of the site, m: sets the atmospheric pressure (ISO 2533 standard atmosphere) unless atmosphericPressureKpa is given',
      }),
    ),
    atmosphericPressureKpa: Type.Optional(
      Type.Union([Type.Number({ minimum: 50, maximum: 110 }), Type.Null()], {
        description:
          "the site's usual atmospheric pressure, kPa (default 101.325, sea level): lowers the boiling point at altitude",
      }),
    ),
    label: Type.Optional(
      Type.Union([Type.String({ maxLength: 200 }), Type.Null()], { description: 'free text, e.g. registration plate' }),
    ),
    samplePeriodS: Type.Optional(
      Type.Integer({
        minimum: 1,
        maximum: SAMPLE_PERIOD_MAX_S,
        description:
          'period J1939 frames / OBD-II responses are decimated to, whole seconds (default 10); set it before the first frames',
      }),
    ),
  },
  { additionalProperties: false },
);

export const Vehicle = Type.Object({
  vehicleId: Type.String(),
  fleetId: Type.String(),
  engineFamily: Type.String(),
  thermostatOpenC: Type.Number(),
  capPressureKpa: Type.Number(),
  glycolPercent: Type.Number(),
  samplePeriodS: Type.Integer({ description: 'period bus frames are decimated to, s' }),
  label: Type.Union([Type.String(), Type.Null()]),
  createdAt: Type.String({ format: 'date-time' }),
  updatedAt: Type.String({ format: 'date-time' }),
  glycolBasis: Type.Union([Type.Literal('mass'), Type.Literal('volume'), Type.Null()], {
    description: 'how glycolPercent was given; glycolPercent is stored and shown by mass',
  }),
  glycolPercentByVolume: Type.Number({ description: 'the same mix by volume, % (converted with the densities above)' }),
  depot: Type.Union([Type.String(), Type.Null()]),
  siteAltitudeM: Type.Union([Type.Number(), Type.Null()]),
  atmosphericPressureKpa: Type.Number({
    description: "used for the boiling point, kPa: the vehicle's own site, else its depot's, else 101.325 (sea level)",
  }),
  siteSource: Type.Union([Type.Literal('vehicle'), Type.Literal('depot'), Type.Literal('sea level')], {
    description: 'where atmosphericPressureKpa comes from',
  }),
  depotName: Type.Union([Type.String(), Type.Null()], {
    description: "the depot's name, when the depot is registered with one (PUT /v1/depots/{depotId})",
  }),
  defaultProfile: Type.Boolean({
    description:
      'true: no profile was set; thermostat, cap and glycol are defaults, so boiling and freezing figures are assumptions',
  }),
});
