export { decodeSegment, encodeSegment, isEncodedSegment } from './segment-codec';
