/**
 * SEG-Y header field tables: byte positions (1-based, as the standard counts
 * them), sizes, types and meanings. Source: SEG-Y revision 1 (SEG, 2002) and
 * revision 2.0 (SEG, 2017), binary file header and standard trace header
 * tables; the positions named in references.md are among them.
 *
 * Binary header positions are file positions (3201–3600); trace header
 * positions are relative to the start of the 240-byte trace header (1–240).
 * One table per header so that a header viewer can list every field with its
 * byte position and meaning.
 */

export type FieldType = 'int8' | 'uint8' | 'int16' | 'uint16' | 'int32' | 'uint32' | 'uint64' | 'float64';

export interface HeaderField {
  /** Key used in parsed headers. */
  key: string;
  /** First byte, 1-based (file position for the binary header, header position for trace headers). */
  byte: number;
  type: FieldType;
  meaning: string;
  /** Revision that introduced the field (0 = from the start). */
  rev?: 0 | 1 | 2;
}

export const FIELD_SIZE: Record<FieldType, number> = { int8: 1, uint8: 1, int16: 2, uint16: 2, int32: 4, uint32: 4, uint64: 8, float64: 8 };

export const BINARY_HEADER_START = 3201;
export const TEXTUAL_HEADER_BYTES = 3200;
export const BINARY_HEADER_BYTES = 400;
export const TRACE_HEADER_BYTES = 240;

export const BINARY_HEADER_FIELDS: readonly HeaderField[] = [
  { key: 'jobId', byte: 3201, type: 'int32', meaning: 'Job identification number' },
  { key: 'lineNumber', byte: 3205, type: 'int32', meaning: 'Line number' },
  { key: 'reelNumber', byte: 3209, type: 'int32', meaning: 'Reel number' },
  { key: 'tracesPerEnsemble', byte: 3213, type: 'int16', meaning: 'Number of data traces per ensemble' },
  { key: 'auxTracesPerEnsemble', byte: 3215, type: 'int16', meaning: 'Number of auxiliary traces per ensemble' },
  { key: 'sampleInterval', byte: 3217, type: 'uint16', meaning: 'Sample interval (µs for time data; m or ft for depth data)' },
  { key: 'originalSampleInterval', byte: 3219, type: 'uint16', meaning: 'Sample interval of original field recording' },
  { key: 'samplesPerTrace', byte: 3221, type: 'uint16', meaning: 'Number of samples per data trace' },
  { key: 'originalSamplesPerTrace', byte: 3223, type: 'uint16', meaning: 'Number of samples per data trace for original field recording' },
  { key: 'formatCode', byte: 3225, type: 'int16', meaning: 'Data sample format code' },
  { key: 'ensembleFold', byte: 3227, type: 'int16', meaning: 'Ensemble fold' },
  { key: 'traceSorting', byte: 3229, type: 'int16', meaning: 'Trace sorting code' },
  { key: 'verticalSum', byte: 3231, type: 'int16', meaning: 'Vertical sum code' },
  { key: 'sweepFrequencyStart', byte: 3233, type: 'int16', meaning: 'Sweep frequency at start (Hz)' },
  { key: 'sweepFrequencyEnd', byte: 3235, type: 'int16', meaning: 'Sweep frequency at end (Hz)' },
  { key: 'sweepLength', byte: 3237, type: 'int16', meaning: 'Sweep length (ms)' },
  { key: 'sweepType', byte: 3239, type: 'int16', meaning: 'Sweep type code' },
  { key: 'sweepChannel', byte: 3241, type: 'int16', meaning: 'Trace number of sweep channel' },
  { key: 'sweepTaperStart', byte: 3243, type: 'int16', meaning: 'Sweep trace taper length at start (ms)' },
  { key: 'sweepTaperEnd', byte: 3245, type: 'int16', meaning: 'Sweep trace taper length at end (ms)' },
  { key: 'taperType', byte: 3247, type: 'int16', meaning: 'Taper type' },
  { key: 'correlatedTraces', byte: 3249, type: 'int16', meaning: 'Correlated data traces' },
  { key: 'binaryGainRecovered', byte: 3251, type: 'int16', meaning: 'Binary gain recovered' },
  { key: 'amplitudeRecovery', byte: 3253, type: 'int16', meaning: 'Amplitude recovery method' },
  { key: 'measurementSystem', byte: 3255, type: 'int16', meaning: 'Measurement system (1 = metres, 2 = feet)' },
  { key: 'impulsePolarity', byte: 3257, type: 'int16', meaning: 'Impulse signal polarity' },
  { key: 'vibratoryPolarity', byte: 3259, type: 'int16', meaning: 'Vibratory polarity code' },
  { key: 'extTracesPerEnsemble', byte: 3261, type: 'int32', meaning: 'Extended number of data traces per ensemble', rev: 2 },
  { key: 'extAuxTracesPerEnsemble', byte: 3265, type: 'int32', meaning: 'Extended number of auxiliary traces per ensemble', rev: 2 },
  { key: 'extSamplesPerTrace', byte: 3269, type: 'int32', meaning: 'Extended number of samples per data trace', rev: 2 },
  { key: 'extSampleInterval', byte: 3273, type: 'float64', meaning: 'Extended sample interval (IEEE double)', rev: 2 },
  { key: 'extOriginalSampleInterval', byte: 3281, type: 'float64', meaning: 'Extended sample interval of original field recording', rev: 2 },
  { key: 'extOriginalSamplesPerTrace', byte: 3289, type: 'int32', meaning: 'Extended number of samples per data trace in original recording', rev: 2 },
  { key: 'extEnsembleFold', byte: 3293, type: 'int32', meaning: 'Extended ensemble fold', rev: 2 },
  { key: 'byteOrder', byte: 3297, type: 'uint32', meaning: 'Byte order constant 0x01020304 (0 = big-endian, as before revision 2)', rev: 2 },
  { key: 'revisionMajor', byte: 3501, type: 'uint8', meaning: 'SEG-Y format revision, major number', rev: 1 },
  { key: 'revisionMinor', byte: 3502, type: 'uint8', meaning: 'SEG-Y format revision, minor number', rev: 1 },
  { key: 'fixedLengthTraces', byte: 3503, type: 'int16', meaning: 'Fixed length trace flag (1 = all traces have the same length)', rev: 1 },
  { key: 'extendedTextualHeaders', byte: 3505, type: 'int16', meaning: 'Number of 3200-byte extended textual headers (-1 = variable, ended by an EndText stanza)', rev: 1 },
  { key: 'maxAdditionalTraceHeaders', byte: 3507, type: 'int32', meaning: 'Maximum number of additional 240-byte trace headers', rev: 2 },
  { key: 'timeBasis', byte: 3511, type: 'int16', meaning: 'Time basis code', rev: 2 },
  { key: 'tracesInFile', byte: 3513, type: 'uint64', meaning: 'Number of traces in this file or stream', rev: 2 },
  { key: 'firstTraceOffset', byte: 3521, type: 'uint64', meaning: 'Byte offset of the first trace from the start of the file', rev: 2 },
  { key: 'trailerStanzas', byte: 3529, type: 'int32', meaning: 'Number of 3200-byte data trailer stanza records', rev: 2 },
];

export const TRACE_HEADER_FIELDS: readonly HeaderField[] = [
  { key: 'traceSequenceLine', byte: 1, type: 'int32', meaning: 'Trace sequence number within line' },
  { key: 'traceSequenceFile', byte: 5, type: 'int32', meaning: 'Trace sequence number within file' },
  { key: 'fieldRecord', byte: 9, type: 'int32', meaning: 'Original field record number' },
  { key: 'traceNumber', byte: 13, type: 'int32', meaning: 'Trace number within the original field record' },
  { key: 'energySourcePoint', byte: 17, type: 'int32', meaning: 'Energy source point number' },
  { key: 'cdp', byte: 21, type: 'int32', meaning: 'Ensemble (CDP) number' },
  { key: 'cdpTrace', byte: 25, type: 'int32', meaning: 'Trace number within the ensemble' },
  { key: 'traceId', byte: 29, type: 'int16', meaning: 'Trace identification code' },
  { key: 'verticalSum', byte: 31, type: 'int16', meaning: 'Number of vertically summed traces' },
  { key: 'horizontalStack', byte: 33, type: 'int16', meaning: 'Number of horizontally stacked traces' },
  { key: 'dataUse', byte: 35, type: 'int16', meaning: 'Data use (1 = production, 2 = test)' },
  { key: 'offset', byte: 37, type: 'int32', meaning: 'Distance from source point to receiver group' },
  { key: 'receiverElevation', byte: 41, type: 'int32', meaning: 'Receiver group elevation' },
  { key: 'surfaceElevationAtSource', byte: 45, type: 'int32', meaning: 'Surface elevation at source' },
  { key: 'sourceDepth', byte: 49, type: 'int32', meaning: 'Source depth below surface' },
  { key: 'receiverDatumElevation', byte: 53, type: 'int32', meaning: 'Datum elevation at receiver group' },
  { key: 'sourceDatumElevation', byte: 57, type: 'int32', meaning: 'Datum elevation at source' },
  { key: 'sourceWaterDepth', byte: 61, type: 'int32', meaning: 'Water depth at source' },
  { key: 'groupWaterDepth', byte: 65, type: 'int32', meaning: 'Water depth at group' },
  { key: 'elevationScalar', byte: 69, type: 'int16', meaning: 'Scalar for elevations and depths (41–68)' },
  { key: 'coordinateScalar', byte: 71, type: 'int16', meaning: 'Scalar for coordinates (73–88, 181–188): positive multiplies, negative divides' },
  { key: 'sourceX', byte: 73, type: 'int32', meaning: 'Source coordinate X' },
  { key: 'sourceY', byte: 77, type: 'int32', meaning: 'Source coordinate Y' },
  { key: 'groupX', byte: 81, type: 'int32', meaning: 'Group coordinate X' },
  { key: 'groupY', byte: 85, type: 'int32', meaning: 'Group coordinate Y' },
  { key: 'coordinateUnits', byte: 89, type: 'int16', meaning: 'Coordinate units (1 = length, 2 = arc seconds, 3 = degrees, 4 = DMS)' },
  { key: 'weatheringVelocity', byte: 91, type: 'int16', meaning: 'Weathering velocity' },
  { key: 'subweatheringVelocity', byte: 93, type: 'int16', meaning: 'Subweathering velocity' },
  { key: 'sourceUpholeTime', byte: 95, type: 'int16', meaning: 'Uphole time at source (ms)' },
  { key: 'groupUpholeTime', byte: 97, type: 'int16', meaning: 'Uphole time at group (ms)' },
  { key: 'sourceStatic', byte: 99, type: 'int16', meaning: 'Source static correction (ms)' },
  { key: 'groupStatic', byte: 101, type: 'int16', meaning: 'Group static correction (ms)' },
  { key: 'totalStatic', byte: 103, type: 'int16', meaning: 'Total static applied (ms)' },
  { key: 'lagA', byte: 105, type: 'int16', meaning: 'Lag time A (ms)' },
  { key: 'lagB', byte: 107, type: 'int16', meaning: 'Lag time B (ms)' },
  { key: 'delayRecordingTime', byte: 109, type: 'int16', meaning: 'Delay recording time (ms)' },
  { key: 'muteStart', byte: 111, type: 'int16', meaning: 'Mute time start (ms)' },
  { key: 'muteEnd', byte: 113, type: 'int16', meaning: 'Mute time end (ms)' },
  { key: 'samples', byte: 115, type: 'uint16', meaning: 'Number of samples in this trace' },
  { key: 'sampleInterval', byte: 117, type: 'uint16', meaning: 'Sample interval of this trace (µs)' },
  { key: 'gainType', byte: 119, type: 'int16', meaning: 'Gain type of field instruments' },
  { key: 'gainConstant', byte: 121, type: 'int16', meaning: 'Instrument gain constant (dB)' },
  { key: 'initialGain', byte: 123, type: 'int16', meaning: 'Instrument early or initial gain (dB)' },
  { key: 'correlated', byte: 125, type: 'int16', meaning: 'Correlated (1 = no, 2 = yes)' },
  { key: 'sweepFrequencyStart', byte: 127, type: 'int16', meaning: 'Sweep frequency at start (Hz)' },
  { key: 'sweepFrequencyEnd', byte: 129, type: 'int16', meaning: 'Sweep frequency at end (Hz)' },
  { key: 'sweepLength', byte: 131, type: 'int16', meaning: 'Sweep length (ms)' },
  { key: 'sweepType', byte: 133, type: 'int16', meaning: 'Sweep type' },
  { key: 'sweepTaperStart', byte: 135, type: 'int16', meaning: 'Sweep taper length at start (ms)' },
  { key: 'sweepTaperEnd', byte: 137, type: 'int16', meaning: 'Sweep taper length at end (ms)' },
  { key: 'taperType', byte: 139, type: 'int16', meaning: 'Taper type' },
  { key: 'aliasFilterFrequency', byte: 141, type: 'int16', meaning: 'Alias filter frequency (Hz)' },
  { key: 'aliasFilterSlope', byte: 143, type: 'int16', meaning: 'Alias filter slope (dB/octave)' },
  { key: 'notchFilterFrequency', byte: 145, type: 'int16', meaning: 'Notch filter frequency (Hz)' },
  { key: 'notchFilterSlope', byte: 147, type: 'int16', meaning: 'Notch filter slope (dB/octave)' },
  { key: 'lowCutFrequency', byte: 149, type: 'int16', meaning: 'Low-cut frequency (Hz)' },
  { key: 'highCutFrequency', byte: 151, type: 'int16', meaning: 'High-cut frequency (Hz)' },
  { key: 'lowCutSlope', byte: 153, type: 'int16', meaning: 'Low-cut slope (dB/octave)' },
  { key: 'highCutSlope', byte: 155, type: 'int16', meaning: 'High-cut slope (dB/octave)' },
  { key: 'year', byte: 157, type: 'int16', meaning: 'Year data recorded' },
  { key: 'dayOfYear', byte: 159, type: 'int16', meaning: 'Day of year' },
  { key: 'hour', byte: 161, type: 'int16', meaning: 'Hour of day' },
  { key: 'minute', byte: 163, type: 'int16', meaning: 'Minute of hour' },
  { key: 'second', byte: 165, type: 'int16', meaning: 'Second of minute' },
  { key: 'timeBasis', byte: 167, type: 'int16', meaning: 'Time basis code' },
  { key: 'traceWeighting', byte: 169, type: 'int16', meaning: 'Trace weighting factor' },
  { key: 'geophoneRollPos1', byte: 171, type: 'int16', meaning: 'Geophone group number of roll switch position one' },
  { key: 'geophoneFirstTrace', byte: 173, type: 'int16', meaning: 'Geophone group number of trace 1 in original record' },
  { key: 'geophoneLastTrace', byte: 175, type: 'int16', meaning: 'Geophone group number of last trace in original record' },
  { key: 'gapSize', byte: 177, type: 'int16', meaning: 'Gap size (total groups dropped)' },
  { key: 'overTravel', byte: 179, type: 'int16', meaning: 'Over travel associated with taper' },
  { key: 'cdpX', byte: 181, type: 'int32', meaning: 'X coordinate of ensemble (CDP) position', rev: 1 },
  { key: 'cdpY', byte: 185, type: 'int32', meaning: 'Y coordinate of ensemble (CDP) position', rev: 1 },
  { key: 'inline', byte: 189, type: 'int32', meaning: 'In-line number (3D poststack)', rev: 1 },
  { key: 'crossline', byte: 193, type: 'int32', meaning: 'Cross-line number (3D poststack)', rev: 1 },
  { key: 'shotpoint', byte: 197, type: 'int32', meaning: 'Shotpoint number', rev: 1 },
  { key: 'shotpointScalar', byte: 201, type: 'int16', meaning: 'Scalar for the shotpoint number', rev: 1 },
  { key: 'traceValueUnit', byte: 203, type: 'int16', meaning: 'Trace value measurement unit', rev: 1 },
  { key: 'transductionMantissa', byte: 205, type: 'int32', meaning: 'Transduction constant mantissa', rev: 1 },
  { key: 'transductionExponent', byte: 209, type: 'int16', meaning: 'Transduction constant power of ten', rev: 1 },
  { key: 'transductionUnit', byte: 211, type: 'int16', meaning: 'Transduction units', rev: 1 },
  { key: 'deviceId', byte: 213, type: 'int16', meaning: 'Device/trace identifier', rev: 1 },
  { key: 'timeScalar', byte: 215, type: 'int16', meaning: 'Scalar for times (95–114): positive multiplies, negative divides', rev: 1 },
  { key: 'sourceType', byte: 217, type: 'int16', meaning: 'Source type/orientation', rev: 1 },
  { key: 'sourceEnergyMantissa', byte: 225, type: 'int32', meaning: 'Source measurement mantissa', rev: 1 },
  { key: 'sourceEnergyExponent', byte: 229, type: 'int16', meaning: 'Source measurement power of ten', rev: 1 },
  { key: 'sourceEnergyUnit', byte: 231, type: 'int16', meaning: 'Source measurement unit', rev: 1 },
];

/** Default positions of the fields that files in the wild often put elsewhere (overridable). */
export const OVERRIDABLE_DEFAULTS = { cdpX: 181, cdpY: 185, inline: 189, crossline: 193 } as const;
export type OverridableField = keyof typeof OVERRIDABLE_DEFAULTS;

const byKey = (list: readonly HeaderField[]) => Object.fromEntries(list.map((f) => [f.key, f])) as Record<string, HeaderField>;
export const BINARY_FIELD = byKey(BINARY_HEADER_FIELDS);
export const TRACE_FIELD = byKey(TRACE_HEADER_FIELDS);

/** "bytes 3225–3226" for a field (as error messages name it). */
export function bytesLabel(f: Pick<HeaderField, 'byte' | 'type'>): string {
  return `bytes ${f.byte}–${f.byte + FIELD_SIZE[f.type] - 1}`;
}

/** Read one field from a header buffer whose first byte is header position `base`. */
export function readField(view: DataView, f: Pick<HeaderField, 'byte' | 'type'>, base: number, little: boolean): number {
  const o = f.byte - base;
  switch (f.type) {
    case 'int8': return view.getInt8(o);
    case 'uint8': return view.getUint8(o);
    case 'int16': return view.getInt16(o, little);
    case 'uint16': return view.getUint16(o, little);
    case 'int32': return view.getInt32(o, little);
    case 'uint32': return view.getUint32(o, little);
    case 'uint64': return Number(view.getBigUint64(o, little));
    case 'float64': return view.getFloat64(o, little);
  }
}
