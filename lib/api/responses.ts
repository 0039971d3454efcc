/**
 * The success bodies of the public API, field by field, for the OpenAPI document
 * (lib/api/openapi/operations.ts gives each operation its schema). They are the JSON form of the
 * types the lib/ view functions return (Date → ISO string, a missing optional field left out), and
 * strict: an answer carrying a field the document does not describe is a contract violation, which
 * the proxied campaign (scripts/api-campaign.ts) reports. tests/integration/openapi.test.ts parses
 * real answers with them, and ./responses-types.ts fails typecheck when a view type and its schema
 * drift apart. Billing bodies live in ./responses-billing.ts.
 */
import "server-only";
import { z } from "@/lib/zod";
// The envelope export's published schema, defined once beside the code that writes it.
import { envelopeDocumentSchema } from "@/lib/sweeps/envelope";

const signupSchema = z.strictObject({ accepted: z.literal(true), message: z.string() });
const passwordResetSchema = z.strictObject({ ok: z.literal(true) });
const meSessionsSchema = z.strictObject({ ended: z.number() });
const tokenSchema = z.strictObject({ token: z.strictObject({ id: z.string(), name: z.string(), scopes: z.array(z.enum(["read", "write"])), prefix: z.string(), createdAt: z.string(), lastUsedAt: z.string().nullable(), revokedAt: z.string().nullable(), studioId: z.string() }) });
const publicInviteViewSchema = z.strictObject({ studio: z.strictObject({ id: z.string(), name: z.string() }), email: z.string(), role: z.enum(["owner", "engineer", "finance"]), expiresAt: z.string(), expired: z.boolean(), accepted: z.boolean() });
const inviteSchema = z.strictObject({ invite: publicInviteViewSchema });
const inviteAcceptSchema = z.strictObject({ studio: z.strictObject({ id: z.string(), name: z.string(), role: z.enum(["owner", "engineer", "finance"]) }) });
const capturedMailSchema = z.strictObject({ id: z.string(), from: z.string(), to: z.string(), subject: z.string(), text: z.string(), html: z.string(), links: z.array(z.string()), receivedAt: z.string() });
const devMailSchema = z.strictObject({ messages: z.array(capturedMailSchema) });
const memberPatchSchema = z.strictObject({ member: z.strictObject({ userId: z.string(), email: z.string(), name: z.string(), role: z.enum(["owner", "engineer", "finance"]), joinedAt: z.string() }) });
const memberDeleteSchema = z.strictObject({ removed: z.strictObject({ userId: z.string() }) });
const inviteViewSchema = z.strictObject({ id: z.string(), email: z.string(), role: z.enum(["owner", "engineer", "finance"]), expiresAt: z.string(), createdAt: z.string(), expired: z.boolean() });
const invitesSchema = z.strictObject({ invites: z.array(inviteViewSchema) });
const createdInviteSchema = z.strictObject({ id: z.string(), email: z.string(), role: z.enum(["owner", "engineer", "finance"]), expiresAt: z.string() });
const invitePostSchema = z.strictObject({ invite: createdInviteSchema, mailSent: z.boolean() });
const inviteDeleteSchema = z.strictObject({ deleted: z.strictObject({ id: z.string() }) });
const verdictSchema = z.enum(["exploded", "tunneled", "deep-overlap", "energy-drift", "stable", "step-unstable", "restitution-off", "coarse-contact", "jitter", "creep", "sinking"]);
const verdictCountsSchema = z.strictObject({ exploded: z.number(), tunneled: z.number(), "deep-overlap": z.number(), "energy-drift": z.number(), stable: z.number(), "step-unstable": z.number(), "restitution-off": z.number(), "coarse-contact": z.number(), jitter: z.number(), creep: z.number(), sinking: z.number() });
const overviewSweepSchema = z.strictObject({ id: z.string(), name: z.string(), status: z.string(), reason: z.string().nullable(), cells: z.number(), cellsDone: z.number(), createdAt: z.string(), finishedAt: z.string().nullable(), verdictCounts: verdictCountsSchema });
const overviewCheckSchema = z.strictObject({ id: z.string(), catalogueId: z.string(), catalogueName: z.string(), catalogueVersion: z.number(), sweepId: z.string(), status: z.string(), createdAt: z.string(), pairsAtRisk: z.array(z.string()).nullable(), pairs: z.number() });
const studioOverviewSchema = z.strictObject({ role: z.enum(["owner", "engineer", "finance"]).nullable(), compute: z.strictObject({ balanceMs: z.number(), month: z.strictObject({ key: z.string(), usedMs: z.number(), capMs: z.number().nullable(), overageMs: z.number() }), previousMonthUsedMs: z.number(), trend: z.array(z.strictObject({ day: z.string(), usedMs: z.number() })) }), running: z.array(overviewSweepSchema), latest: z.array(overviewSweepSchema), checks: z.array(overviewCheckSchema), counts: z.strictObject({ sweeps: z.number(), catalogues: z.number(), snapshots: z.number(), members: z.number() }), nextInvoice: z.strictObject({ periodKey: z.string(), overageMs: z.number(), runningTotalCents: z.number(), centsPerMinute: z.number(), lastInvoice: z.strictObject({ id: z.string(), number: z.string().nullable(), totalCents: z.number(), periodEnd: z.string() }).nullable() }).nullable() });
const overviewSchema = z.strictObject({ overview: studioOverviewSchema });
const endpointViewSchema = z.strictObject({ id: z.string(), url: z.string(), events: z.array(z.enum(["sweep.finished", "sweep.failed", "sweep.paused", "catalogue_check.finished", "balance.low"])), createdAt: z.string(), deliveries: z.strictObject({ delivered: z.number(), pending: z.number(), failed: z.number() }) });
const webhooksSchema = z.strictObject({ endpoints: z.array(endpointViewSchema) });
const webhookDeleteSchema = z.strictObject({ removed: z.string() });
const deliveryViewSchema = z.strictObject({ eventId: z.string(), type: z.string(), status: z.enum(["pending", "delivered", "failed"]), attempts: z.number(), lastStatusCode: z.number().nullable(), lastError: z.string().nullable(), resends: z.number(), createdAt: z.string(), lastAttemptAt: z.string().nullable(), deliveredAt: z.string().nullable() });
const deliveriesSchema = z.strictObject({ deliveries: z.array(deliveryViewSchema) });
const resendSchema = z.strictObject({ delivery: deliveryViewSchema });
const tokenDeleteSchema = z.strictObject({ token: z.strictObject({ id: z.string(), name: z.string(), scopes: z.array(z.enum(["read", "write"])), prefix: z.string(), createdAt: z.string(), lastUsedAt: z.string().nullable(), revokedAt: z.string().nullable() }) });
const quoteMoneySchema = z.strictObject({ ceilingPrepaidMs: z.number(), ceilingOverageMs: z.number(), prepaidTenthsOfCentPerMinute: z.number(), prepaidPriceSource: z.enum(["purchases", "list price"]), overageTenthsOfCentPerMinute: z.number(), ceilingCents: z.number(), expectedCents: z.number() });
const quoteViolationSchema = z.strictObject({ name: z.enum(["status", "monthlyComputeMs", "maxRunningSweeps", "maxCellsPerSweep", "maxStepsPerCell", "maxBodies", "overageAllowed", "overageCapMs", "balance"]), message: z.string(), code: z.enum(["quota_exceeded", "insufficient_minutes", "studio_suspended"]), value: z.number(), requested: z.number(), remaining: z.number(), unit: z.string() });
const quoteLimitsSchema = z.strictObject({ maxCells: z.number(), maxStepsPerCell: z.number(), maxBodies: z.number(), monthlyComputeMs: z.number(), monthUsedMs: z.number(), monthReservedMs: z.number(), monthRemainingMs: z.number(), maxRunningSweeps: z.number(), runningSweeps: z.number(), overageAllowed: z.boolean(), overageCapMs: z.number(), overageRemainingMs: z.number(), studioStatus: z.enum(["active", "suspended"]), violations: z.array(quoteViolationSchema) });
const sweepQuoteSchema = z.strictObject({ cells: z.number(), cachedCells: z.number(), cellsToRun: z.number(), steps: z.number(), metering: z.enum(["wall-clock", "work-units-v1"]), ceilingMs: z.number(), expectedMs: z.number(), estimatedComputeMs: z.number(), sampledCells: z.number(), balanceMs: z.number(), balanceAfterMs: z.number(), money: quoteMoneySchema, limits: quoteLimitsSchema, warnings: z.array(z.string()) });
const quoteSchema = z.strictObject({ quote: sweepQuoteSchema });
const sweepAxisViewSchema = z.strictObject({ path: z.string(), label: z.string(), unit: z.string(), spacing: z.enum(["linear", "log", "list"]), values: z.array(z.union([z.string(), z.number()])) });
const pairSceneSchema = z.strictObject({ kind: z.literal("pair"), massAKg: z.number(), massBKg: z.number(), radiusAM: z.number(), radiusBM: z.number(), speedAMPerS: z.number(), speedBMPerS: z.number(), offsetFraction: z.number(), gapM: z.number(), spinARadPerS: z.number().optional(), spinBRadPerS: z.number().optional() });
const wallSceneSchema = z.strictObject({ kind: z.literal("wall"), massKg: z.number(), radiusM: z.number(), speedMPerS: z.number(), angleDeg: z.number(), gapM: z.number(), spinRadPerS: z.number().optional() });
const rowSceneSchema = z.strictObject({ kind: z.literal("row"), count: z.number(), massKg: z.number(), radiusM: z.number(), strikerMassKg: z.number(), strikerSpeedMPerS: z.number(), spacingM: z.number(), gapM: z.number() });
const boxSceneSchema = z.strictObject({ kind: z.literal("box"), count: z.number(), massKg: z.number(), radiusM: z.number(), widthM: z.number(), heightM: z.number(), maxSpeedMPerS: z.number(), gravityMPerS2: z.number() });
const snapshotBodySchema = z.strictObject({ xM: z.number(), yM: z.number(), vxMPerS: z.number(), vyMPerS: z.number(), massKg: z.number(), radiusM: z.number(), omegaRadPerS: z.number().optional() });
const snapshotWallSchema = z.strictObject({ normalX: z.number(), normalY: z.number(), offsetM: z.number() });
const snapshotSceneSchema = z.strictObject({ kind: z.literal("snapshot"), bodies: z.array(snapshotBodySchema), walls: z.array(snapshotWallSchema), gravityMPerS2: z.number(), speedScale: z.number() });
const slopeSceneSchema = z.strictObject({ kind: z.literal("slope"), massKg: z.number(), radiusM: z.number(), angleDeg: z.number(), speedMPerS: z.number(), spinRadPerS: z.number(), gravityMPerS2: z.number(), body: z.enum(["disc", "crate"]) });
const stackSceneSchema = z.strictObject({ kind: z.literal("stack"), count: z.number(), massKg: z.number(), radiusM: z.number(), gravityMPerS2: z.number(), perturbationFraction: z.number() });
const frictionSpecSchema = z.strictObject({ coefficient: z.number(), staticCoefficient: z.number().optional(), stiffnessRatio: z.number().optional(), stiffness: z.number().optional(), dampingRatio: z.number().optional() });
const contactSpecSchema = z.strictObject({ model: z.enum(["linear", "hertz"]), stiffness: z.number().optional(), material: z.strictObject({ youngsModulusPa: z.number(), poissonRatio: z.number() }).optional(), wall: z.enum(["disc-material", "rigid"]).optional(), damping: z.union([z.strictObject({ kind: z.literal("none") }), z.strictObject({ kind: z.literal("coefficient"), value: z.number() }), z.strictObject({ kind: z.literal("restitution"), value: z.number() })]), friction: frictionSpecSchema.optional(), rollingResistance: z.number().optional() });
const tolerancesSchema = z.strictObject({ energyDriftRel: z.number(), maxOverlapFraction: z.number(), blowUpEnergyFactor: z.number(), amplificationLimit: z.number().optional(), restitutionRel: z.number().optional(), energyPeakRel: z.number().optional(), minStepsPerContact: z.number().optional(), restSpeedMPerS: z.number().optional(), creepFraction: z.number().optional(), restingOverlapFraction: z.number().optional() });
const scenarioSchema = z.strictObject({ scene: z.union([pairSceneSchema, wallSceneSchema, rowSceneSchema, boxSceneSchema, snapshotSceneSchema, slopeSceneSchema, stackSceneSchema]), contact: contactSpecSchema, integrator: z.enum(["symplectic-euler", "velocity-verlet", "explicit-euler"]), dtS: z.number(), substeps: z.number(), durationS: z.number(), tolerances: tolerancesSchema, verdictRules: z.number().optional(), seed: z.number() });
const storedSweepSpecSchema = z.strictObject({ name: z.string().optional(), version: z.literal(1), axes: z.array(z.strictObject({ parameter: z.string(), spacing: z.enum(["linear", "log"]).optional(), from: z.number().optional(), to: z.number().optional(), count: z.number().optional(), values: z.array(z.union([z.string(), z.number()])).optional(), pairs: z.array(z.strictObject({ name: z.string(), massAKg: z.number(), radiusAM: z.number(), speedAMPerS: z.number(), massBKg: z.number(), radiusBM: z.number(), speedBMPerS: z.number(), stiffness: z.number().optional(), restitution: z.number().optional(), friction: z.number().optional(), rollingResistance: z.number().optional() })).optional() })), scenario: scenarioSchema });
const sweepsSchema = z.strictObject({ sweeps: z.array(z.strictObject({ id: z.string(), name: z.string(), status: z.enum(["failed", "queued", "running", "paused", "done", "cancelled"]), reason: z.string().nullable(), createdAt: z.string(), startedAt: z.string().nullable(), finishedAt: z.string().nullable(), cells: z.number(), cellsDone: z.number(), cachedCells: z.number(), chunks: z.number(), chunksDone: z.number(), computeMs: z.number(), estimatedComputeMs: z.number(), ceilingMs: z.number(), metering: z.string(), verdictCounts: verdictCountsSchema, axes: z.array(sweepAxisViewSchema), spec: storedSweepSpecSchema, rerunOf: z.strictObject({ sweepId: z.string(), cellIndex: z.number() }).nullable(), createdBy: z.strictObject({ id: z.string(), name: z.string() }).nullable() })), page: z.number(), pageSize: z.number(), total: z.number(), creators: z.array(z.strictObject({ id: z.string(), name: z.string() })) });
const sweepViewSchema = z.strictObject({ id: z.string(), name: z.string(), status: z.enum(["failed", "queued", "running", "paused", "done", "cancelled"]), reason: z.string().nullable(), createdAt: z.string(), startedAt: z.string().nullable(), finishedAt: z.string().nullable(), cells: z.number(), cellsDone: z.number(), cachedCells: z.number(), chunks: z.number(), chunksDone: z.number(), computeMs: z.number(), estimatedComputeMs: z.number(), ceilingMs: z.number(), metering: z.string(), verdictCounts: verdictCountsSchema, axes: z.array(sweepAxisViewSchema), spec: storedSweepSpecSchema, rerunOf: z.strictObject({ sweepId: z.string(), cellIndex: z.number() }).nullable() });
const sweepSchema = z.strictObject({ sweep: sweepViewSchema });
const timeSeriesSchema = z.strictObject({ tS: z.array(z.number()), bodies: z.array(z.strictObject({ xM: z.array(z.number()), yM: z.array(z.number()), pxNs: z.array(z.number()), pyNs: z.array(z.number()), angleRad: z.array(z.number()).optional(), omegaRadPerS: z.array(z.number()).optional() })), totalPxNs: z.array(z.number()), totalPyNs: z.array(z.number()), kineticJ: z.array(z.number()), potentialJ: z.array(z.number()), totalJ: z.array(z.number()), maxOverlapM: z.array(z.number()), slidingContacts: z.array(z.number()).optional(), stickingContacts: z.array(z.number()).optional() });
const metricsSchema = z.strictObject({ momentumDriftRelX: z.number().nullable(), momentumDriftRelY: z.number().nullable(), energyErrorRel: z.number().nullable(), maxEnergyErrorRel: z.number().nullable(), effectiveRestitution: z.number().nullable(), maxOverlapFraction: z.number().nullable(), contactDurationS: z.number().nullable(), contactSteps: z.number().nullable(), tunneled: z.boolean().nullable(), exploded: z.boolean().nullable(), maxOmegaH: z.number().nullable(), amplification: z.number().nullable(), steps: z.number().nullable(), angularMomentumDriftRel: z.number().nullable().optional(), maxTangentialOmegaH: z.number().nullable().optional(), slidingSteps: z.number().nullable().optional(), endSlipMPerS: z.number().nullable().optional(), reboundSpinRadPerS: z.number().nullable().optional(), reboundAngleDeg: z.number().nullable().optional(), settleTimeS: z.number().nullable().optional(), residualKineticJ: z.number().nullable().optional(), residualMaxSpeedMPerS: z.number().nullable().optional(), creepM: z.number().nullable().optional(), restingOverlapFraction: z.number().nullable().optional(), restingOverlapRatio: z.number().nullable().optional() });
const cellSchema = z.strictObject({ cell: z.strictObject({ index: z.number(), axisValues: z.array(z.union([z.string(), z.number()])), scenario: scenarioSchema, metrics: metricsSchema.nullable(), verdict: verdictSchema.nullable(), reason: z.string().nullable() }), series: timeSeriesSchema.optional() });
const contactTuningSchema = z.strictObject({ effectiveMassKg: z.number(), stiffnessNPerM: z.number(), dampingNsPerM: z.number(), frequencyHz: z.number(), dampingRatio: z.number(), phasePerSubstep: z.number() });
const tunedEnvelopeRowSchema = z.strictObject({ x: z.union([z.string(), z.number()]), safeY: z.number().nullable(), yLimit: z.number().nullable(), status: z.enum(["pending", "ok", "none-stable"]), contact: contactTuningSchema.nullable() });
const numberRecordSchema = z.record(z.string(), z.number());
const checkSettingsSchema = z.strictObject({ dtS: z.number(), substeps: z.number(), integrator: z.enum(["symplectic-euler", "velocity-verlet", "explicit-euler"]), contactModel: z.enum(["linear", "hertz"]), damping: z.enum(["none", "catalogue"]), speedSteps: z.number(), offsets: z.array(z.number()), tolerances: z.strictObject({ energyDriftRel: z.number(), maxOverlapFraction: z.number() }), margin: z.number(), stiffness: z.number().optional(), groupStiffness: numberRecordSchema.optional(), frictionStiffnessRatio: z.number().optional(), gravityMPerS2: z.number().optional(), slopeAngleDeg: z.number().optional() });
const envelopeSchema = z.strictObject({ envelope: z.strictObject({ xPath: z.string(), yPath: z.string(), margin: z.number(), bound: z.enum(["max", "min"]), rows: z.array(tunedEnvelopeRowSchema) }), document: envelopeDocumentSchema });
const catalogueSummarySchema = z.strictObject({ id: z.string(), name: z.string(), version: z.number(), contentHash: z.string(), fileName: z.string(), fileBytes: z.number(), format: z.enum(["json", "csv"]), objectCount: z.number(), original: z.strictObject({ fileName: z.string(), fileBytes: z.number(), contentHash: z.string() }).nullable(), createdAt: z.string() });
const cataloguesSchema = z.strictObject({ catalogues: z.array(catalogueSummarySchema), limits: z.strictObject({ maxFileBytes: z.number(), maxRows: z.literal(64), maxNameLength: z.literal(80), maxCatalogueNameLength: z.literal(120) }) });
const catalogueObjectSchema = z.strictObject({ name: z.string(), massKg: z.number(), radiusM: z.number(), topSpeedMPerS: z.number(), restitution: z.number(), group: z.string().nullable(), friction: z.number().nullable().optional(), rollingResistance: z.number().nullable().optional() });
const cataloguePostSchema = z.strictObject({ catalogue: z.strictObject({ objects: z.array(catalogueObjectSchema), notes: z.array(z.string()), versions: z.array(catalogueSummarySchema), id: z.string(), name: z.string(), version: z.number(), contentHash: z.string(), fileName: z.string(), fileBytes: z.number(), format: z.enum(["json", "csv"]), objectCount: z.number(), original: z.strictObject({ fileName: z.string(), fileBytes: z.number(), contentHash: z.string() }).nullable(), createdAt: z.string() }) });
const catalogueDetailSchema = z.strictObject({ objects: z.array(catalogueObjectSchema), notes: z.array(z.string()), versions: z.array(catalogueSummarySchema), id: z.string(), name: z.string(), version: z.number(), contentHash: z.string(), fileName: z.string(), fileBytes: z.number(), format: z.enum(["json", "csv"]), objectCount: z.number(), original: z.strictObject({ fileName: z.string(), fileBytes: z.number(), contentHash: z.string() }).nullable(), createdAt: z.string() });
const checkSummarySchema = z.strictObject({ id: z.string(), catalogueId: z.string(), createdAt: z.string(), settings: checkSettingsSchema, sweepId: z.string(), status: z.string(), cells: z.number(), cellsDone: z.number() });
const catalogueSchema = z.strictObject({ catalogue: catalogueDetailSchema, checks: z.array(checkSummarySchema) });
const checkQuoteSchema = z.strictObject({ quote: sweepQuoteSchema, settings: checkSettingsSchema });
const checksSchema = z.strictObject({ checks: z.array(checkSummarySchema) });
const pairSummarySchema = z.strictObject({ name: z.string(), i: z.number(), j: z.number(), a: z.string(), b: z.string(), closingSpeedMPerS: z.number(), stiffness: z.number(), worstVerdict: z.enum(["exploded", "tunneled", "deep-overlap", "energy-drift", "stable", "step-unstable", "restitution-off", "coarse-contact", "jitter", "creep", "sinking"]).nullable(), counts: verdictCountsSchema, cellsDone: z.number(), cells: z.number(), highestStableSpeedMPerS: z.number().nullable(), boundMargin: z.number(), worstCellIndex: z.number().nullable() });
const pairMatrixSchema = z.strictObject({ objects: z.array(z.string()), pairs: z.array(pairSummarySchema), atRisk: z.array(z.string()), riskiest: z.string().nullable(), complete: z.boolean() });
const advisedSettingsSchema = z.strictObject({ substeps: z.number(), stiffness: z.number(), stiffnessMin: z.number(), stiffnessMax: z.number() });
const impossiblePairSchema = z.strictObject({ pair: z.string(), reason: z.string(), highestClosingSpeedMPerS: z.number() });
const adviceSchema = z.strictObject({ kind: z.enum(["stiffness", "substeps", "objects", "keep", "groups"]), summary: z.string(), details: z.array(z.string()), settings: advisedSettingsSchema.nullable(), impossiblePairs: z.array(impossiblePairSchema) });
const frictionContactRowSchema = z.strictObject({ contact: z.string(), kind: z.enum(["pair", "floor"]), objectA: z.string(), objectB: z.string().nullable(), frictionCoefficient: z.number().nullable(), rollingResistance: z.number().nullable(), stiffness: z.number(), normalStiffnessNPerM: z.number(), tangentialStiffnessNPerM: z.number(), tangentialMassKg: z.number(), tangentialOmegaH: z.number(), tangentialStable: z.boolean(), largestStiffnessRatio: z.number(), restingOverlapM: z.number(), allowedRestingOverlapM: z.number(), restingWithinTolerance: z.boolean(), slidingAngleDeg: z.number().nullable(), rollingSlipAngleDeg: z.number().nullable(), holdsOnSlope: z.boolean().nullable(), slideTimeS: z.number().nullable(), slideDistanceM: z.number().nullable(), rollingSpeedMPerS: z.number().nullable(), rollingDistanceM: z.number().nullable() });
const frictionCheckSchema = z.strictObject({ stiffnessRatio: z.number(), stiffnessRatioGiven: z.boolean(), gravityMPerS2: z.number(), slopeAngleDeg: z.number().nullable(), contacts: z.array(frictionContactRowSchema), largestStiffnessRatio: z.number().nullable(), largestStiffnessRatioContact: z.string().nullable(), tangentialSubsteps: z.number().nullable(), substeps: z.number().nullable(), unstableContacts: z.array(z.string()), sinkingContacts: z.array(z.string()), summary: z.string(), details: z.array(z.string()) });
const recommendationSchema = z.strictObject({ margin: z.number(), lightestReducedMassKg: z.number(), lightestPair: z.string(), stiffness: z.number().nullable(), stiffnessNote: z.string(), substeps: z.number().nullable(), substepsNote: z.string(), advice: adviceSchema, friction: frictionCheckSchema.optional() });
const pairContactTuningSchema = z.strictObject({ pair: z.string(), objectA: z.string(), objectB: z.string(), checked: contactTuningSchema, recommended: contactTuningSchema.nullable() });
const confirmationSchema = z.strictObject({ settings: checkSettingsSchema, checkId: z.string().nullable(), status: z.enum(["running", "not-run", "confirmed", "refuted"]), pairsAtRisk: z.array(z.string()), pairsOffTarget: z.array(z.string()) });
const checkViewSchema = z.strictObject({ id: z.string(), catalogue: catalogueSummarySchema, objects: z.array(catalogueObjectSchema), settings: checkSettingsSchema, sweep: sweepViewSchema, matrix: pairMatrixSchema, recommendation: recommendationSchema, contacts: z.array(pairContactTuningSchema), confirmation: confirmationSchema.nullable() });
const checkSchema = z.strictObject({ check: checkViewSchema });
const snapshotSummarySchema = z.strictObject({ id: z.string(), name: z.string(), version: z.number(), contentHash: z.string(), fileName: z.string(), fileBytes: z.number(), bodyCount: z.number(), wallCount: z.number(), createdAt: z.string() });
const snapshotsSchema = z.strictObject({ snapshots: z.array(snapshotSummarySchema), limits: z.strictObject({ maxFileBytes: z.number(), maxBodies: z.literal(10000), maxWalls: z.literal(64), maxNameLength: z.literal(120) }) });
const snapshotDetailSchema = z.strictObject({ scene: snapshotSceneSchema, versions: z.array(snapshotSummarySchema), id: z.string(), name: z.string(), version: z.number(), contentHash: z.string(), fileName: z.string(), fileBytes: z.number(), bodyCount: z.number(), wallCount: z.number(), createdAt: z.string() });
const snapshotPostSchema = z.strictObject({ snapshot: snapshotDetailSchema });
const snapshotSchema = z.strictObject({ snapshot: snapshotDetailSchema, sweepSpec: z.strictObject({ scenario: z.strictObject({ scene: z.union([z.strictObject({ kind: z.literal("pair"), massAKg: z.number(), massBKg: z.number(), radiusAM: z.number(), radiusBM: z.number(), speedAMPerS: z.number(), speedBMPerS: z.number(), offsetFraction: z.number(), gapM: z.number(), spinARadPerS: z.number().optional(), spinBRadPerS: z.number().optional() }), z.strictObject({ kind: z.literal("wall"), massKg: z.number(), radiusM: z.number(), speedMPerS: z.number(), angleDeg: z.number(), gapM: z.number(), spinRadPerS: z.number().optional() }), z.strictObject({ kind: z.literal("row"), count: z.number(), massKg: z.number(), radiusM: z.number(), strikerMassKg: z.number(), strikerSpeedMPerS: z.number(), spacingM: z.number(), gapM: z.number() }), z.strictObject({ kind: z.literal("box"), count: z.number(), massKg: z.number(), radiusM: z.number(), widthM: z.number(), heightM: z.number(), maxSpeedMPerS: z.number(), gravityMPerS2: z.number() }), z.strictObject({ kind: z.literal("snapshot"), bodies: z.array(z.strictObject({ xM: z.number(), yM: z.number(), vxMPerS: z.number(), vyMPerS: z.number(), massKg: z.number(), radiusM: z.number(), omegaRadPerS: z.number().optional() })), walls: z.array(z.strictObject({ normalX: z.number(), normalY: z.number(), offsetM: z.number() })).optional(), gravityMPerS2: z.number().optional(), speedScale: z.number().optional() }), z.strictObject({ kind: z.literal("slope"), massKg: z.number(), radiusM: z.number(), angleDeg: z.number(), gravityMPerS2: z.number(), speedMPerS: z.number().optional(), spinRadPerS: z.number().optional(), body: z.enum(["disc", "crate"]).optional() }), z.strictObject({ kind: z.literal("stack"), count: z.number(), massKg: z.number(), radiusM: z.number(), gravityMPerS2: z.number(), perturbationFraction: z.number().optional() })]), contact: z.strictObject({ model: z.enum(["linear", "hertz"]), stiffness: z.number().optional(), material: z.strictObject({ youngsModulusPa: z.number(), poissonRatio: z.number() }).optional(), wall: z.enum(["disc-material", "rigid"]).optional(), damping: z.union([z.strictObject({ kind: z.literal("none") }), z.strictObject({ kind: z.literal("coefficient"), value: z.number() }), z.strictObject({ kind: z.literal("restitution"), value: z.number() })]).optional(), friction: z.strictObject({ coefficient: z.number(), staticCoefficient: z.number().optional(), stiffnessRatio: z.number().optional(), stiffness: z.number().optional(), dampingRatio: z.number().optional() }).optional(), rollingResistance: z.number().optional() }), integrator: z.enum(["symplectic-euler", "velocity-verlet", "explicit-euler"]), dtS: z.number(), durationS: z.number(), substeps: z.number().optional(), tolerances: z.strictObject({ energyDriftRel: z.number(), maxOverlapFraction: z.number(), blowUpEnergyFactor: z.number(), amplificationLimit: z.number().optional(), restitutionRel: z.number().optional(), energyPeakRel: z.number().optional(), minStepsPerContact: z.number().optional(), restSpeedMPerS: z.number().optional(), creepFraction: z.number().optional(), restingOverlapFraction: z.number().optional() }).optional(), verdictRules: z.number().optional(), seed: z.number().optional() }), version: z.literal(1).optional(), name: z.string().optional(), axes: z.array(z.strictObject({ parameter: z.string(), spacing: z.enum(["linear", "log"]).optional(), from: z.number().optional(), to: z.number().optional(), count: z.number().optional(), values: z.array(z.union([z.string(), z.number()])).optional(), pairs: z.array(z.strictObject({ name: z.string(), massAKg: z.number(), radiusAM: z.number(), speedAMPerS: z.number(), massBKg: z.number(), radiusBM: z.number(), speedBMPerS: z.number(), stiffness: z.number().optional(), restitution: z.number().optional(), friction: z.number().optional(), rollingResistance: z.number().optional() })).optional() })).optional() }), sweepSuggestion: z.strictObject({ basis: z.enum(["derived", "nothing-meets"]), toleranceOverlapFraction: z.number(), targetOverlapFraction: z.number(), contactCount: z.number(), impact: z.strictObject({ body: z.number(), other: z.number().nullable(), wall: z.number().nullable(), effectiveMassKg: z.number(), closingSpeedMPerS: z.number(), radiusM: z.number(), stiffnessNPerM: z.number() }).nullable(), resting: z.strictObject({ body: z.number(), loadN: z.number(), radiusM: z.number(), stiffnessNPerM: z.number() }).nullable(), lightest: z.strictObject({ body: z.number(), other: z.number().nullable(), wall: z.number().nullable(), effectiveMassKg: z.number(), closingSpeedMPerS: z.number(), radiusM: z.number() }).nullable(), stiffnessNPerM: z.number(), maxStableStepS: z.number().nullable(), gameFrameStepS: z.number(), stiffnessCapAtGameStepNPerM: z.number().nullable(), stiffnessAxis: z.strictObject({ from: z.number(), to: z.number(), count: z.number() }), frameSteps: z.array(z.number()), durationS: z.number(), reasoning: z.array(z.string()) }) });
const studioUsageViewSchema = z.strictObject({ id: z.string(), name: z.string(), status: z.enum(["active", "suspended"]), createdAt: z.string(), memberCount: z.number(), balanceMs: z.number(), monthUsedMs: z.number(), monthlyComputeMs: z.number(), monthUsedPercent: z.number(), monthRemainingMs: z.number(), overageRemainingMs: z.number(), runningSweeps: z.number(), queuedSweeps: z.number(), pausedSweeps: z.number() });
const adminStudiosSchema = z.strictObject({ studios: z.array(studioUsageViewSchema) });
const overridesSchema = z.strictObject({ monthlyComputeMs: z.number().nullable(), maxRunningSweeps: z.number().nullable(), maxCellsPerSweep: z.number().nullable(), maxStepsPerCell: z.number().nullable(), maxBodies: z.number().nullable(), overageAllowed: z.boolean().nullable(), overageCapMs: z.number().nullable() });
const quotaValuesSchema = z.strictObject({ monthlyComputeMs: z.number(), maxRunningSweeps: z.number(), maxCellsPerSweep: z.number(), maxStepsPerCell: z.number(), maxBodies: z.number(), overageAllowed: z.boolean(), overageCapMs: z.number() });
const quotaViewSchema = z.strictObject({ overrides: overridesSchema, effective: quotaValuesSchema, defaults: quotaValuesSchema });
const adjustmentViewSchema = z.strictObject({ id: z.number(), computeMs: z.number(), memo: z.string(), createdAt: z.string() });
const quotasAnswerSchema = z.strictObject({ quotas: quotaViewSchema });
const quotasPatchSchema = z.strictObject({ quotas: quotaViewSchema });
const adjustmentsSchema = z.strictObject({ adjustments: z.array(adjustmentViewSchema) });
const adjustmentPostSchema = z.strictObject({ adjustment: adjustmentViewSchema, balanceMs: z.number() });
const statusSchema = z.strictObject({ studio: z.strictObject({ id: z.string(), status: z.enum(["active", "suspended"]) }) });
const usersSchema = z.strictObject({ users: z.array(z.strictObject({ id: z.string(), email: z.string(), name: z.string(), isAdmin: z.boolean(), createdAt: z.string(), studioCount: z.number() })) });
const userPatchSchema = z.strictObject({ user: z.strictObject({ id: z.string(), email: z.string(), isAdmin: z.boolean() }) });
const auditViewSchema = z.strictObject({ id: z.number(), at: z.string(), actor: z.string(), actorUserId: z.string().nullable(), studioId: z.string().nullable(), action: z.string(), subjectType: z.string(), subjectId: z.string(), before: z.unknown().describe("The subject before the action (any JSON; null when created)."), after: z.unknown().describe("The subject after the action (any JSON)."), reason: z.string() });
const auditSchema = z.strictObject({ entries: z.array(auditViewSchema) });
const queueEntryViewSchema = z.strictObject({ sweepId: z.string(), sweepName: z.string(), studioId: z.string(), studioName: z.string(), status: z.string(), reason: z.string().nullable(), chunks: z.number(), chunksDone: z.number(), chunksRunning: z.number(), estimatedComputeMs: z.number(), computeMs: z.number(), ceilingMs: z.number(), wallMs: z.number(), createdAt: z.string() });
const queueSchema = z.strictObject({ sweeps: z.array(queueEntryViewSchema) });
const cellResultSchema = z.strictObject({ index: z.number(), axisValues: z.array(z.union([z.string(), z.number()])), verdict: z.enum(["exploded", "tunneled", "deep-overlap", "energy-drift", "stable", "step-unstable", "restitution-off", "coarse-contact", "jitter", "creep", "sinking"]), reason: z.string(), metrics: metricsSchema });
const gameSettingsPairSchema = z.strictObject({ pair: z.string(), objectA: z.string(), objectB: z.string(), effectiveMassKg: z.number(), stiffnessNPerM: z.number(), dampingNsPerM: z.number(), frequencyHz: z.number(), dampingRatio: z.number(), restitution: z.number().nullable(), overlapZero: z.strictObject({ dampingRatio: z.number(), dampingNsPerM: z.number() }), worstVerdict: z.string().nullable() });
const gameSettingsSchema = z.strictObject({ format: z.literal("kickdrift-game-settings"), version: z.literal(2), source: z.strictObject({ kind: z.literal("catalogue-check"), checkId: z.string(), catalogue: z.string(), catalogueVersion: z.number(), stiffness: z.enum(["checked", "recommended"]) }), frameRateHz: z.number(), dtS: z.number(), substeps: z.number(), substepS: z.number(), integrator: z.string(), contactEnd: z.literal("force-zero"), contact: z.strictObject({ model: z.literal("linear"), stiffnessNPerM: z.number(), frequencyHz: z.number(), dampingRatio: z.number(), effectiveMassKg: z.number(), lightestPair: z.string() }), pairs: z.array(gameSettingsPairSchema) });
export const signupAnswer = signupSchema;
export const passwordResetAnswer = passwordResetSchema;
export const meSessionsAnswer = meSessionsSchema;
export const tokenAnswer = tokenSchema;
export const inviteAnswer = inviteSchema;
export const inviteAcceptAnswer = inviteAcceptSchema;
export const devMailAnswer = devMailSchema;
export const memberPatchAnswer = memberPatchSchema;
export const memberDeleteAnswer = memberDeleteSchema;
export const invitesAnswer = invitesSchema;
export const invitePostAnswer = invitePostSchema;
export const inviteDeleteAnswer = inviteDeleteSchema;
export const overviewAnswer = overviewSchema;
export const webhooksAnswer = webhooksSchema;
export const webhookPostAnswer = z.strictObject({ endpoint: endpointViewSchema, secret: z.string() });
export const webhookDeleteAnswer = webhookDeleteSchema;
export const deliveriesAnswer = deliveriesSchema;
export const resendAnswer = resendSchema;
export const tokenDeleteAnswer = tokenDeleteSchema;
export const quoteAnswer = quoteSchema;
export const sweepsAnswer = sweepsSchema;
export const sweepAnswer = sweepSchema;
export const cellAnswer = cellSchema;
export const envelopeAnswer = envelopeSchema;
export const cataloguesAnswer = cataloguesSchema;
export const cataloguePostAnswer = cataloguePostSchema;
export const catalogueAnswer = catalogueSchema;
export const checkQuoteAnswer = checkQuoteSchema;
export const checksAnswer = checksSchema;
export const checkAnswer = checkSchema;
export const snapshotsAnswer = snapshotsSchema;
export const snapshotPostAnswer = snapshotPostSchema;
export const snapshotAnswer = snapshotSchema;
export const adminStudiosAnswer = adminStudiosSchema;
export const adminStudioAnswer = z.strictObject({ studio: studioUsageViewSchema, quotas: quotaViewSchema, members: z.array(z.strictObject({ joinedAt: z.string(), userId: z.string(), email: z.string(), name: z.string(), role: z.enum(["owner", "engineer", "finance"]) })), adjustments: z.array(adjustmentViewSchema) });
export const quotasAnswer = quotasAnswerSchema;
export const quotasPatchAnswer = quotasPatchSchema;
export const adjustmentsAnswer = adjustmentsSchema;
export const adjustmentPostAnswer = adjustmentPostSchema;
export const statusAnswer = statusSchema;
export const usersAnswer = usersSchema;
export const userPatchAnswer = userPatchSchema;
export const auditAnswer = auditSchema;
export const queueAnswer = queueSchema;

/** A cell of the cells export (GET …/cells, JSON): a stored cell; with contact=true also its contact tuning (null where it has none). */
const exportedContactSchema = z.strictObject({ effectiveMassKg: z.number().nullable(), stiffnessNPerM: z.number().nullable(), dampingNsPerM: z.number().nullable(), frequencyHz: z.number().nullable(), dampingRatio: z.number().nullable(), phasePerSubstep: z.number().nullable() });
export const cellsAnswer = z.strictObject({
  cells: z.array(cellResultSchema.extend({ metrics: metricsSchema, contact: exportedContactSchema.nullable().optional() })),
  cursor: z.string().optional().describe("With after=: the change cursor up to which the answer is complete."),
});

/** The check export as JSON (format=json), lib/catalogues/exports.ts checkExportJson. */
const checkExportSchema = z.strictObject({
  format: z.literal("kickdrift-catalogue-check"),
  version: z.literal(1),
  contactEnd: z.string(),
  checkId: z.string(),
  catalogue: z.strictObject({ name: z.string(), version: z.number(), contentHash: z.string() }),
  settings: checkSettingsSchema,
  complete: z.boolean(),
  pairsAtRisk: z.array(z.string()),
  pairs: z.array(
    z.strictObject({
      pair: z.string(),
      objectA: z.string(),
      objectB: z.string(),
      closingSpeedMPerS: z.number(),
      stiffness: z.number(),
      worstVerdict: verdictSchema.nullable(),
      highestStableSpeedMPerS: z.number().nullable(),
      boundMargin: z.number().nullable(),
      counts: verdictCountsSchema,
    }),
  ),
  recommendation: recommendationSchema,
  contacts: z.array(pairContactTuningSchema).optional(),
});
/** format=json gives the check export; format=game-settings the engine settings document (docs/game-settings.md). */
export const checkExportAnswer = z.union([checkExportSchema, gameSettingsSchema]);

/** The OpenAPI document itself: its shape is the OpenAPI 3.1 standard's, not ours, so only its frame is described. */
export const openApiDocumentAnswer = z.looseObject({ openapi: z.literal("3.1.0"), info: z.looseObject({ title: z.string(), version: z.string() }), paths: z.record(z.string(), z.looseObject({})) });
