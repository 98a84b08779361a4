import { resolve } from 'node:path'
import { describe, expect, it } from 'vitest'
import { photoStorageSettings } from '../../server/utils/photo-storage'

const S3 = { S3_BUCKET: 'photos', S3_ENDPOINT: 'https://s3.example.com', S3_REGION: 'eu-west-1', S3_ACCESS_KEY_ID: 'AKIAEXAMPLE', S3_SECRET_ACCESS_KEY: 'secret' }

describe('photo storage settings', () => {
  it('keeps photos on the filesystem under .data/uploads unless told otherwise', () => {
    expect(photoStorageSettings({})).toEqual({ driver: 'fs', base: resolve('.data/uploads') })
    expect(photoStorageSettings({ UPLOAD_DIR: '/srv/fourfold/photos' })).toEqual({ driver: 'fs', base: '/srv/fourfold/photos' })
  })

  it('switches to the S3-compatible driver when every S3 variable is set', () => {
    expect(photoStorageSettings({ ...S3, UPLOAD_DIR: '/ignored' })).toEqual({
      driver: 's3', bucket: 'photos', endpoint: 'https://s3.example.com', region: 'eu-west-1', accessKeyId: 'AKIAEXAMPLE', secretAccessKey: 'secret',
    })
  })

  it('refuses a half-set S3 configuration and names what is missing, rather than falling back quietly', () => {
    const settings = photoStorageSettings({ S3_BUCKET: 'photos', S3_ENDPOINT: 'https://s3.example.com' })
    expect(settings.driver).toBe('invalid')
    expect(settings.driver === 'invalid' && settings.message).toMatch(/S3_REGION, S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY are not set/)
    const one = photoStorageSettings({ ...S3, S3_REGION: '' })
    expect(one.driver === 'invalid' && one.message).toMatch(/S3_REGION is not set/)
  })
})
