/** Plain message pages: not found, server error, bad request. Never a stack trace. */
export function MessagePage(props: { heading: string; detail: string; code?: string }) {
  return (
    <section class="vc-message">
      {props.code ? <p class="vc-code">{props.code}</p> : null}
      <h1>{props.heading}</h1>
      <p>{props.detail}</p>
      <p>
        <a href="/">Back to the overview</a>
      </p>
    </section>
  );
}
