/**
 * The attribute table Emberline de-identifies by: the actions of DICOM PS3.15 Annex E, Basic
 * Application Level Confidentiality Profile (Table E.1-1), with the Retain Longitudinal
 * Temporal Information with Modified Dates Option applied to dates.
 *
 * Actions (PS3.15 E.1.1):
 *   D  replace with a dummy value consistent with the VR
 *   Z  replace with a zero-length value (or a dummy)
 *   X  remove
 *   K  keep (a sequence is kept and its items cleaned by this same table)
 *   C  clean: here, a date moved by the case's shift (DA, and the date part of DT)
 *   U  replace a UID by another, consistently within a case
 * Where the table offers a choice ("X/Z/D"), the rule takes the strictest one allowed.
 *
 * Where each rule comes from:
 *   'references'  seen in the standard's Table E.1-1 and checked by the tests that cite it
 *                 (test/integration/imaging.spec.ts)
 *   'memory'      an entry of Table E.1-1 as remembered, to be checked against the current table
 *   'retained'    not an attribute the profile removes: geometry, pixel description and
 *                 acquisition technique a viewer or a plan needs, kept explicitly
 *
 * Stricter than the profile on purpose: an attribute named nowhere here is removed, instead of
 * being kept as the profile keeps the attributes its table does not list. A header then holds
 * only what this file names, whatever a scanner adds.
 */

export type ProfileAction = 'D' | 'Z' | 'X' | 'K' | 'C' | 'U';
export type RuleBasis = 'references' | 'memory' | 'retained';

export interface ProfileRule {
  /** Tag as eight upper-case hex digits, group then element: "00100010". */
  tag: string;
  keyword: string;
  /** The action of the Basic profile (the strictest of a choice). */
  action: ProfileAction;
  /** The action once the Modified Dates option applies, where it differs. */
  withModifiedDates?: ProfileAction;
  basis: RuleBasis;
}

const rule = (
  tag: string,
  keyword: string,
  action: ProfileAction,
  basis: RuleBasis,
  withModifiedDates?: ProfileAction,
): ProfileRule => ({ tag, keyword, action, basis, withModifiedDates });

/**
 * Dates become C (moved by the case's shift) and times K under the Modified Dates option: the
 * shift is a whole number of days, so a time of day keeps its value.
 */
const date = (tag: string, keyword: string, action: ProfileAction, basis: RuleBasis) =>
  rule(tag, keyword, action, basis, 'C');
const time = (tag: string, keyword: string, action: ProfileAction, basis: RuleBasis) =>
  rule(tag, keyword, action, basis, 'K');

export const confidentialityProfileRules: readonly ProfileRule[] = [
  // Patient
  rule('00100010', 'PatientName', 'Z', 'references'),
  rule('00100020', 'PatientID', 'Z', 'memory'),
  // Kept Z under the option too: the case holds the year of birth, the header needs nothing.
  rule('00100030', 'PatientBirthDate', 'Z', 'references'),
  rule('00100032', 'PatientBirthTime', 'X', 'memory'),
  rule('00100040', 'PatientSex', 'Z', 'memory'),
  rule('00101010', 'PatientAge', 'X', 'references'),
  rule('00100021', 'IssuerOfPatientID', 'X', 'memory'),
  rule('00100050', 'PatientInsurancePlanCodeSequence', 'X', 'memory'),
  rule('00100101', 'PatientPrimaryLanguageCodeSequence', 'X', 'memory'),
  rule('00101000', 'OtherPatientIDs', 'X', 'memory'),
  rule('00101001', 'OtherPatientNames', 'X', 'memory'),
  rule('00101002', 'OtherPatientIDsSequence', 'X', 'memory'),
  rule('00101005', 'PatientBirthName', 'X', 'memory'),
  rule('00101020', 'PatientSize', 'X', 'memory'),
  rule('00101030', 'PatientWeight', 'X', 'memory'),
  rule('00101040', 'PatientAddress', 'X', 'memory'),
  rule('00101060', 'PatientMotherBirthName', 'X', 'memory'),
  rule('00101080', 'MilitaryRank', 'X', 'memory'),
  rule('00101081', 'BranchOfService', 'X', 'memory'),
  rule('00101090', 'MedicalRecordLocator', 'X', 'memory'),
  rule('00101100', 'ReferencedPatientPhotoSequence', 'X', 'memory'),
  rule('00102000', 'MedicalAlerts', 'X', 'memory'),
  rule('00102110', 'Allergies', 'X', 'memory'),
  rule('00102150', 'CountryOfResidence', 'X', 'memory'),
  rule('00102152', 'RegionOfResidence', 'X', 'memory'),
  rule('00102154', 'PatientTelephoneNumbers', 'X', 'memory'),
  rule('00102160', 'EthnicGroup', 'X', 'memory'),
  rule('00102180', 'Occupation', 'X', 'memory'),
  rule('001021A0', 'SmokingStatus', 'X', 'memory'),
  rule('001021B0', 'AdditionalPatientHistory', 'X', 'memory'),
  rule('001021C0', 'PregnancyStatus', 'X', 'memory'),
  rule('001021F0', 'PatientReligiousPreference', 'X', 'memory'),
  rule('00102203', 'PatientSexNeutered', 'X', 'memory'),
  rule('00102297', 'ResponsiblePerson', 'X', 'memory'),
  rule('00102299', 'ResponsibleOrganization', 'X', 'memory'),
  rule('00104000', 'PatientComments', 'X', 'memory'),
  rule('00380010', 'AdmissionID', 'X', 'memory'),
  rule('00380060', 'ServiceEpisodeID', 'X', 'memory'),
  rule('00380300', 'CurrentPatientLocation', 'X', 'memory'),
  rule('00380400', 'PatientInstitutionResidence', 'X', 'memory'),
  rule('00380500', 'PatientState', 'X', 'memory'),
  rule('00384000', 'VisitComments', 'X', 'memory'),
  rule('00081120', 'ReferencedPatientSequence', 'X', 'memory'),

  // Study, series, request
  date('00080020', 'StudyDate', 'Z', 'references'),
  time('00080030', 'StudyTime', 'Z', 'references'),
  date('00080021', 'SeriesDate', 'X', 'memory'),
  time('00080031', 'SeriesTime', 'X', 'memory'),
  date('00080022', 'AcquisitionDate', 'X', 'memory'),
  time('00080032', 'AcquisitionTime', 'X', 'memory'),
  date('0008002A', 'AcquisitionDateTime', 'X', 'memory'),
  date('00080023', 'ContentDate', 'Z', 'memory'),
  time('00080033', 'ContentTime', 'Z', 'memory'),
  date('00080012', 'InstanceCreationDate', 'X', 'memory'),
  time('00080013', 'InstanceCreationTime', 'X', 'memory'),
  rule('00080024', 'OverlayDate', 'X', 'memory'),
  rule('00080025', 'CurveDate', 'X', 'memory'),
  rule('00080034', 'OverlayTime', 'X', 'memory'),
  rule('00080035', 'CurveTime', 'X', 'memory'),
  rule('00080201', 'TimezoneOffsetFromUTC', 'X', 'memory'),
  rule('00080050', 'AccessionNumber', 'Z', 'references'),
  rule('00200010', 'StudyID', 'Z', 'references'),
  rule('00081030', 'StudyDescription', 'X', 'references'),
  rule('0008103E', 'SeriesDescription', 'X', 'references'),
  rule('00081080', 'AdmittingDiagnosesDescription', 'X', 'memory'),
  rule('00081084', 'AdmittingDiagnosesCodeSequence', 'X', 'memory'),
  rule('00082111', 'DerivationDescription', 'X', 'memory'),
  rule('00084000', 'IdentifyingComments', 'X', 'memory'),
  rule('00204000', 'ImageComments', 'X', 'memory'),
  rule('00324000', 'StudyComments', 'X', 'memory'),
  rule('00321032', 'RequestingPhysician', 'X', 'memory'),
  rule('00321033', 'RequestingService', 'X', 'memory'),
  rule('00321060', 'RequestedProcedureDescription', 'X', 'memory'),
  rule('00321070', 'RequestedContrastAgent', 'X', 'memory'),
  rule('00400006', 'ScheduledPerformingPhysicianName', 'X', 'memory'),
  rule('00400007', 'ScheduledProcedureStepDescription', 'X', 'memory'),
  rule('00400009', 'ScheduledProcedureStepID', 'X', 'memory'),
  rule('00400010', 'ScheduledStationName', 'X', 'memory'),
  rule('00400011', 'ScheduledProcedureStepLocation', 'X', 'memory'),
  rule('00400241', 'PerformedStationAETitle', 'X', 'memory'),
  rule('00400242', 'PerformedStationName', 'X', 'memory'),
  rule('00400243', 'PerformedLocation', 'X', 'memory'),
  rule('00400244', 'PerformedProcedureStepStartDate', 'X', 'memory'),
  rule('00400245', 'PerformedProcedureStepStartTime', 'X', 'memory'),
  rule('00400250', 'PerformedProcedureStepEndDate', 'X', 'memory'),
  rule('00400251', 'PerformedProcedureStepEndTime', 'X', 'memory'),
  rule('00400253', 'PerformedProcedureStepID', 'X', 'memory'),
  rule('00400254', 'PerformedProcedureStepDescription', 'X', 'memory'),
  rule('00400275', 'RequestAttributesSequence', 'X', 'memory'),
  rule('00400280', 'CommentsOnThePerformedProcedureStep', 'X', 'memory'),
  rule('00401001', 'RequestedProcedureID', 'X', 'memory'),
  rule('00401400', 'RequestedProcedureComments', 'X', 'memory'),
  rule('00402008', 'OrderEnteredBy', 'X', 'memory'),
  rule('00402009', 'OrderEntererLocation', 'X', 'memory'),
  rule('00402010', 'OrderCallbackPhoneNumber', 'X', 'memory'),
  rule('00402016', 'PlacerOrderNumberImagingServiceRequest', 'X', 'memory'),
  rule('00402017', 'FillerOrderNumberImagingServiceRequest', 'X', 'memory'),
  rule('00081110', 'ReferencedStudySequence', 'X', 'memory'),
  rule('00081111', 'ReferencedPerformedProcedureStepSequence', 'X', 'memory'),

  // Staff, institution, equipment
  rule('00080090', 'ReferringPhysicianName', 'Z', 'references'),
  rule('00080092', 'ReferringPhysicianAddress', 'X', 'memory'),
  rule('00080094', 'ReferringPhysicianTelephoneNumbers', 'X', 'memory'),
  rule('00080096', 'ReferringPhysicianIdentificationSequence', 'X', 'memory'),
  rule('0008009C', 'ConsultingPhysicianName', 'X', 'memory'),
  rule('00081048', 'PhysiciansOfRecord', 'X', 'memory'),
  rule('00081049', 'PhysiciansOfRecordIdentificationSequence', 'X', 'memory'),
  rule('00081050', 'PerformingPhysicianName', 'X', 'memory'),
  rule('00081052', 'PerformingPhysicianIdentificationSequence', 'X', 'memory'),
  rule('00081060', 'NameOfPhysiciansReadingStudy', 'X', 'memory'),
  rule('00081062', 'PhysiciansReadingStudyIdentificationSequence', 'X', 'memory'),
  rule('00081070', 'OperatorsName', 'X', 'references'),
  rule('00081072', 'OperatorIdentificationSequence', 'X', 'memory'),
  rule('00080080', 'InstitutionName', 'X', 'references'),
  rule('00080081', 'InstitutionAddress', 'X', 'references'),
  rule('00080082', 'InstitutionCodeSequence', 'X', 'memory'),
  rule('00081040', 'InstitutionalDepartmentName', 'X', 'memory'),
  rule('00081010', 'StationName', 'X', 'references'),
  rule('00181000', 'DeviceSerialNumber', 'X', 'memory'),
  rule('00181002', 'DeviceUID', 'U', 'memory'),
  rule('00181004', 'PlateID', 'X', 'memory'),
  rule('00181005', 'GeneratorID', 'X', 'memory'),
  rule('00181007', 'CassetteID', 'X', 'memory'),
  rule('00181008', 'GantryID', 'X', 'memory'),
  rule('00181010', 'SecondaryCaptureDeviceID', 'X', 'memory'),
  rule('00181020', 'SoftwareVersions', 'X', 'memory'),
  rule('00181030', 'ProtocolName', 'X', 'memory'),
  rule('00181400', 'AcquisitionDeviceProcessingDescription', 'X', 'memory'),
  rule('00184000', 'AcquisitionComments', 'X', 'memory'),

  // Structured content, observers, trailing material
  rule('0040A073', 'VerifyingObserverSequence', 'D', 'memory'),
  rule('0040A075', 'VerifyingObserverName', 'D', 'memory'),
  rule('0040A027', 'VerifyingOrganization', 'X', 'memory'),
  rule('0040A123', 'PersonName', 'D', 'memory'),
  rule('0040A160', 'TextValue', 'X', 'memory'),
  rule('0040A730', 'ContentSequence', 'X', 'memory'),
  rule('00400555', 'AcquisitionContextSequence', 'X', 'memory'),
  rule('00700084', 'ContentCreatorName', 'Z', 'memory'),
  rule('00700086', 'ContentCreatorIdentificationCodeSequence', 'X', 'memory'),
  rule('00880130', 'StorageMediaFileSetID', 'X', 'memory'),
  rule('00880200', 'IconImageSequence', 'X', 'memory'),
  rule('04000550', 'ModifiedAttributesSequence', 'X', 'memory'),
  rule('04000561', 'OriginalAttributesSequence', 'X', 'memory'),
  rule('FFFAFFFA', 'DigitalSignaturesSequence', 'X', 'memory'),
  rule('FFFCFFFC', 'DataSetTrailingPadding', 'X', 'memory'),

  // UIDs
  rule('0020000D', 'StudyInstanceUID', 'U', 'references'),
  rule('0020000E', 'SeriesInstanceUID', 'U', 'references'),
  rule('00080018', 'SOPInstanceUID', 'U', 'references'),
  rule('00200052', 'FrameOfReferenceUID', 'U', 'references'),
  rule('00020003', 'MediaStorageSOPInstanceUID', 'U', 'references'),
  rule('00080014', 'InstanceCreatorUID', 'U', 'memory'),
  rule('00081155', 'ReferencedSOPInstanceUID', 'U', 'memory'),
  rule('00041511', 'ReferencedSOPInstanceUIDInFile', 'U', 'memory'),
  rule('00083010', 'IrradiationEventUID', 'U', 'memory'),
  rule('00200200', 'SynchronizationFrameOfReferenceUID', 'U', 'memory'),
  rule('00209161', 'ConcatenationUID', 'U', 'memory'),
  rule('00209164', 'DimensionOrganizationUID', 'U', 'memory'),
  rule('00880140', 'StorageMediaFileSetUID', 'U', 'memory'),
  rule('30060024', 'ReferencedFrameOfReferenceUID', 'U', 'memory'),
  rule('300600C2', 'RelatedFrameOfReferenceUID', 'U', 'memory'),
  rule('0040A124', 'UID', 'U', 'memory'),
  rule('0040DB0C', 'TemplateExtensionOrganizationUID', 'U', 'memory'),
  rule('0040DB0D', 'TemplateExtensionCreatorUID', 'U', 'memory'),
  // "X/Z/U" in the table: kept, their items cleaned (the UIDs inside replaced) by this table.
  rule('00081140', 'ReferencedImageSequence', 'U', 'memory'),
  rule('00082112', 'SourceImageSequence', 'U', 'memory'),

  // Retained: what a viewer and a plan need; none names a person, a place or a visit.
  rule('00080005', 'SpecificCharacterSet', 'K', 'retained'),
  rule('00080008', 'ImageType', 'K', 'retained'),
  rule('00080016', 'SOPClassUID', 'K', 'retained'),
  rule('00080060', 'Modality', 'K', 'retained'),
  rule('00080070', 'Manufacturer', 'K', 'retained'),
  rule('00081090', 'ManufacturerModelName', 'K', 'retained'),
  rule('00081150', 'ReferencedSOPClassUID', 'K', 'retained'),
  rule('0008001C', 'SyntheticData', 'K', 'retained'),
  rule('00180015', 'BodyPartExamined', 'K', 'retained'),
  rule('00180020', 'ScanningSequence', 'K', 'retained'),
  rule('00180021', 'SequenceVariant', 'K', 'retained'),
  rule('00180022', 'ScanOptions', 'K', 'retained'),
  rule('00180023', 'MRAcquisitionType', 'K', 'retained'),
  rule('00180050', 'SliceThickness', 'K', 'retained'),
  rule('00180060', 'KVP', 'K', 'retained'),
  rule('00180080', 'RepetitionTime', 'K', 'retained'),
  rule('00180081', 'EchoTime', 'K', 'retained'),
  rule('00180082', 'InversionTime', 'K', 'retained'),
  rule('00180084', 'ImagingFrequency', 'K', 'retained'),
  rule('00180085', 'ImagedNucleus', 'K', 'retained'),
  rule('00180087', 'MagneticFieldStrength', 'K', 'retained'),
  rule('00180088', 'SpacingBetweenSlices', 'K', 'retained'),
  rule('00180091', 'EchoTrainLength', 'K', 'retained'),
  rule('00181100', 'ReconstructionDiameter', 'K', 'retained'),
  rule('00181120', 'GantryDetectorTilt', 'K', 'retained'),
  rule('00181150', 'ExposureTime', 'K', 'retained'),
  rule('00181151', 'XRayTubeCurrent', 'K', 'retained'),
  rule('00181152', 'Exposure', 'K', 'retained'),
  rule('00181210', 'ConvolutionKernel', 'K', 'retained'),
  rule('00181314', 'FlipAngle', 'K', 'retained'),
  rule('00185100', 'PatientPosition', 'K', 'retained'),
  rule('00200011', 'SeriesNumber', 'K', 'retained'),
  rule('00200012', 'AcquisitionNumber', 'K', 'retained'),
  rule('00200013', 'InstanceNumber', 'K', 'retained'),
  rule('00200032', 'ImagePositionPatient', 'K', 'retained'),
  rule('00200037', 'ImageOrientationPatient', 'K', 'retained'),
  rule('00201041', 'SliceLocation', 'K', 'retained'),
  rule('00280002', 'SamplesPerPixel', 'K', 'retained'),
  rule('00280004', 'PhotometricInterpretation', 'K', 'retained'),
  rule('00280010', 'Rows', 'K', 'retained'),
  rule('00280011', 'Columns', 'K', 'retained'),
  rule('00280030', 'PixelSpacing', 'K', 'retained'),
  rule('00280100', 'BitsAllocated', 'K', 'retained'),
  rule('00280101', 'BitsStored', 'K', 'retained'),
  rule('00280102', 'HighBit', 'K', 'retained'),
  rule('00280103', 'PixelRepresentation', 'K', 'retained'),
  rule('00280120', 'PixelPaddingValue', 'K', 'retained'),
  rule('00280301', 'BurnedInAnnotation', 'K', 'retained'),
  rule('00281050', 'WindowCenter', 'K', 'retained'),
  rule('00281051', 'WindowWidth', 'K', 'retained'),
  rule('00281052', 'RescaleIntercept', 'K', 'retained'),
  rule('00281053', 'RescaleSlope', 'K', 'retained'),
  rule('00281054', 'RescaleType', 'K', 'retained'),
];

const rulesByTag = new Map(confidentialityProfileRules.map((entry) => [entry.tag, entry]));

/** The rule for a tag ("00100010"), or undefined for a tag the table does not name. */
export function profileRuleFor(tag: string): ProfileRule | undefined {
  return rulesByTag.get(tag.toUpperCase());
}

/** Private attributes: odd groups (PS3.5 7.8); the profile removes them all (action X). */
export function isPrivateTag(tag: string): boolean {
  return parseInt(tag.slice(0, 4), 16) % 2 === 1;
}

/**
 * Repeating groups the profile removes whole (from memory): curves (50xx), and overlays
 * (60xx), whose data and comments can carry text burned into a bit plane.
 */
export function isRemovedRepeatingGroup(tag: string): boolean {
  const group = parseInt(tag.slice(0, 4), 16);
  return (group >= 0x5000 && group <= 0x50ff) || (group >= 0x6000 && group <= 0x60ff);
}
