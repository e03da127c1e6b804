/**
 * The worker calls of an optical reading and of a channel profile on its field, from the plain request
 * (requests.ts): nothing here is kept in the page's state, so a reading's profile is asked again from its request.
 */
import type { ProfileRequest, ProfileResult } from '../../src/analyses/index.ts';
import type { AnalysisClient, ProgressFn } from '../worker/client.ts';
import type { OpticsReply } from '../worker/protocol.ts';
import { plateSourceOf, withProfile, type OpticalRequest } from './requests.ts';

/** Every image a reading reads (its images, and an angle series' compensator image). */
export const readingKeys = (r: OpticalRequest): string[] => (r.kind === 'angle-series' && r.plateKey ? [...r.keys, r.plateKey] : [...r.keys]);

/** Reads an optical field (without a profile): the worker's plate, platePair or angleSeries. */
export function readOptical(client: AnalysisClient, r: OpticalRequest, progress: ProgressFn): Promise<OpticsReply> {
  if (r.kind === 'plate') return client.call('plate', { key: r.keys[0], options: { ...r.options, profile: null } }, progress);
  if (r.kind === 'plate-pair') return client.call('platePair', { key: r.keys[0], keyB: r.keys[1], options: { ...r.options, profile: null } }, progress);
  return client.call('angleSeries', { keys: r.keys, plateKey: r.plateKey, options: { ...r.options, profile: null } }, progress);
}

/**
 * The channel profile on a reading's field: `retarda profile --source plate` for one compensator image (the same image
 * read with the same options), the reading with its profile for the others (opticalCommandLine gives the same line).
 */
export async function opticalProfile(client: AnalysisClient, r: OpticalRequest, request: ProfileRequest, progress: ProgressFn): Promise<ProfileResult> {
  if (r.kind === 'plate') return client.call('profile', { key: r.keys[0], texture: {}, request, source: { kind: 'plate', options: plateSourceOf(r.options) } }, progress);
  const reply = r.kind === 'plate-pair'
    ? await client.call('platePair', { key: r.keys[0], keyB: r.keys[1], options: withProfile(r.options, request) }, progress)
    : await client.call('angleSeries', { keys: r.keys, plateKey: r.plateKey, options: withProfile(r.options, request) }, progress);
  return reply.result.profile!;
}
