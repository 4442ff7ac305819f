// A screen that throws while drawing shows what went wrong instead of an empty window.
import { Component, type ErrorInfo, type ReactNode } from 'react';

export class ErrorBoundary extends Component<{ children: ReactNode; resetKey: string }, { error: Error | null; key: string }> {
  override state = { error: null as Error | null, key: this.props.resetKey };

  static getDerivedStateFromError(error: Error) {
    return { error };
  }

  static getDerivedStateFromProps(props: { resetKey: string }, state: { error: Error | null; key: string }) {
    return props.resetKey !== state.key ? { error: null, key: props.resetKey } : null;
  }

  override componentDidCatch(error: Error, info: ErrorInfo): void {
    console.error('Rakeline screen failed:', error, info.componentStack);
  }

  override render() {
    if (this.state.error) {
      return (
        <div className="panel errors" role="alert">
          <h3>✖ This screen could not be drawn</h3>
          <p>{this.state.error.message}</p>
          <p className="small muted">Other screens still work; the stored data are not affected.</p>
        </div>
      );
    }
    return this.props.children;
  }
}
