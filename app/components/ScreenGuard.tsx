/**
 * Keeps a fault in one screen from blanking the whole app: the screen is replaced by a message and a
 * way back, while the session (held above this guard, and saved on the device) is untouched.
 */
import { Component, type ReactNode } from 'react';

interface Props {
  /** What the screen is called in the message ("camera", "comparison", …). */
  screen: string;
  /** Leaves for the images screen (not given on that screen itself). */
  onBack?(): void;
  children: ReactNode;
}

export class ScreenGuard extends Component<Props, { error: Error | null }> {
  state = { error: null as Error | null };

  static getDerivedStateFromError(error: Error) { return { error }; }

  componentDidCatch(error: Error) { console.error(`Retarda: the ${this.props.screen} screen stopped:`, error); }

  render() {
    const e = this.state.error;
    if (!e) return this.props.children;
    return (
      <main className="welcome">
        <section className="drop-target" role="alert" data-testid="screen-fault">
          <h2>The {this.props.screen} screen stopped</h2>
          <p>Something went wrong inside Retarda: {e.message || String(e)}</p>
          <p className="note">Your session, its images and results are kept on this device; nothing was lost.</p>
          <p>
            <button className="primary" onClick={() => this.setState({ error: null })}>Open the {this.props.screen} screen again</button>{' '}
            {this.props.onBack && <button onClick={() => { this.setState({ error: null }); this.props.onBack!(); }}>Go to the images</button>}
          </p>
        </section>
      </main>
    );
  }
}
