import { useState, type FormEvent } from 'react';
import { Navigate, useNavigate, useSearchParams } from 'react-router-dom';
import { Button, ErrorNote, TextField } from '../../../components/ui';
import { useSession } from '../api/get-session';
import { useSignIn } from '../api/sign-in';

export function SignInPage() {
  const session = useSession();
  const signIn = useSignIn();
  const navigate = useNavigate();
  const [params] = useSearchParams();
  const next = params.get('next')?.startsWith('/') ? params.get('next')! : '/';
  const [email, setEmail] = useState('');
  const [password, setPassword] = useState('');

  if (session.data?.user) return <Navigate to={next} replace />;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    signIn.mutate({ email, password }, { onSuccess: () => navigate(next, { replace: true }) });
  };

  return (
    <div className="grid min-h-screen lg:grid-cols-[1.1fr_1fr]">
      <aside className="relative hidden overflow-hidden bg-plum p-12 text-paper lg:flex lg:flex-col lg:justify-between">
        <p className="font-mono text-sm uppercase tracking-[0.3em] text-cut">Bleedwright</p>
        <CardStack />
        <div className="max-w-md">
          <h2 className="text-3xl font-bold leading-tight">Card art in. Print-ready files out.</h2>
          <p className="mt-4 text-paper/75">
            Trim plus bleed at 300 DPI, backs where the printer wants them, decks padded to the sheet — for every card, every
            time the art changes.
          </p>
        </div>
      </aside>
      <main className="flex items-center justify-center p-8">
        <form onSubmit={submit} className="crop-marks w-full max-w-sm space-y-5 rounded-sm p-8" aria-labelledby="sign-in-title">
          <div>
            <p className="font-mono text-xs uppercase tracking-[0.25em] text-cut lg:hidden">Bleedwright</p>
            <h1 id="sign-in-title" className="text-2xl font-bold">
              Sign in
            </h1>
            <p className="mt-1 text-sm text-ink-soft">to your workspace</p>
          </div>
          <TextField label="E-mail" type="email" autoComplete="email" required value={email} onChange={(e) => setEmail(e.target.value)} />
          <TextField
            label="Password"
            type="password"
            autoComplete="current-password"
            required
            value={password}
            onChange={(e) => setPassword(e.target.value)}
          />
          <ErrorNote error={signIn.error} />
          <Button type="submit" className="w-full" disabled={signIn.isPending}>
            {signIn.isPending ? 'Signing in…' : 'Sign in'}
          </Button>
        </form>
      </main>
    </div>
  );
}

/** Three fanned cards with their bleed lines: the product's subject, drawn in CSS. */
function CardStack() {
  const card = 'bleed-line absolute h-64 w-44 rounded-lg border border-paper/20 shadow-2xl';
  return (
    <div className="relative mx-auto h-72 w-80" aria-hidden="true">
      <div className={`${card} left-4 top-6 -rotate-12 bg-plum-light`} />
      <div className={`${card} left-20 top-2 rotate-3 bg-proof`} />
      <div className={`${card} left-36 top-8 rotate-12 bg-cut`}>
        <div className="absolute inset-5 rounded border border-white/50" />
      </div>
    </div>
  );
}
