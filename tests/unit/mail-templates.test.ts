import { describe, expect, it } from 'vitest'
import { inviteMail, resetMail } from '../../server/utils/mail-templates'
import { linksIn } from '../../server/utils/mail-links'

describe('mail bodies', () => {
  it('puts the link in both the text and the HTML part, and escapes what people typed', () => {
    const link = 'http://localhost:3000/accept-invite?token=abc_DEF-123'
    const mail = inviteMail({ to: 'x@y.example', organisation: 'Crumbs <b>&</b> Co', inviter: 'O\'Neill', role: 'coach', link, days: 7 })
    expect(mail.text).toContain(link)
    expect(linksIn(mail.text)).toEqual([link])
    expect(mail.html).toContain(`href="${link}"`)
    expect(mail.html).toContain('Crumbs &lt;b&gt;&amp;&lt;/b&gt; Co')
    expect(mail.html).not.toContain('<b>&</b>')
    expect(mail.subject).toBe('Join Crumbs <b>&</b> Co on Fourfold')
  })

  it('says how long a reset link lasts', () => {
    const mail = resetMail({ to: 'x@y.example', link: 'http://localhost:3000/reset-password?token=t', minutes: 60 })
    expect(mail.text).toContain('expires in 60 minutes')
    expect(mail.html).toContain('expires in 60 minutes')
  })
})
